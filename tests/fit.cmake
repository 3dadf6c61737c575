# fit: live cross-check against scipy.stats (tests/fit_scipy.py drives the
# CLI on generated data and compares with scipy on the same data), and the
# fit benchmark (built here, run by hand: tests/bench/README.md).
if(SP_PYTHON3)
  add_test(NAME fit_scipy
    COMMAND ${SP_PYTHON3} ${CMAKE_CURRENT_SOURCE_DIR}/fit_scipy.py $<TARGET_FILE:scatterprop>)
else()
  add_test(NAME fit_scipy COMMAND sh -c "echo 'fit_scipy: skipped: no python3'; exit 77")
endif()
set_tests_properties(fit_scipy PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 300)

add_executable(bench_fit ${CMAKE_CURRENT_SOURCE_DIR}/bench/bench_fit.c)
target_link_libraries(bench_fit PRIVATE scatterprop_lib)
target_compile_definitions(bench_fit PRIVATE _POSIX_C_SOURCE=200809L)
sp_warnings(bench_fit)
