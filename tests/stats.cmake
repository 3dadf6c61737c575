# Live cross-check of sp_stats_describe against numpy/scipy: a small driver
# prints describe's results for a file of numbers, tests/stats_scipy.py
# generates datasets with a fixed numpy seed, runs the driver and compares.
# The test reports "skipped" (exit 77) when scipy cannot be imported or no
# interpreter was found.
add_executable(stats_driver stats_driver.c)
target_link_libraries(stats_driver PRIVATE scatterprop_lib)
target_compile_definitions(stats_driver PRIVATE _POSIX_C_SOURCE=200809L)
sp_warnings(stats_driver)

if(SP_PYTHON3)
  add_test(NAME stats_scipy
    COMMAND ${SP_PYTHON3} ${CMAKE_CURRENT_SOURCE_DIR}/stats_scipy.py
            $<TARGET_FILE:stats_driver>)
else()
  add_test(NAME stats_scipy
    COMMAND stats_driver --skip "no python3 interpreter found (SP_PYTHON3)")
endif()
set_tests_properties(stats_scipy PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 120)
