# dist: live cross-check against scipy.stats.
#
# tests/dist_driver.c prints every family's logpdf, cdf_P, cdf_Q, quantiles,
# mean and variance on a grid; tests/dist_scipy.py recomputes them with
# scipy.stats (python3-scipy) and compares.  Without python3 or scipy the
# test reports "skipped" (ctest SKIP_RETURN_CODE 77), never a silent pass.
add_executable(dist_driver dist_driver.c)
target_link_libraries(dist_driver PRIVATE scatterprop_lib)
target_compile_definitions(dist_driver PRIVATE _POSIX_C_SOURCE=200809L)
sp_warnings(dist_driver)

if(SP_PYTHON3)
  add_test(NAME dist_scipy
    COMMAND ${SP_PYTHON3} ${CMAKE_CURRENT_SOURCE_DIR}/dist_scipy.py
            $<TARGET_FILE:dist_driver>)
else()
  add_test(NAME dist_scipy COMMAND dist_driver --skip "python3 not found")
endif()
set_tests_properties(dist_scipy PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 120)
