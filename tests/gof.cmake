# Live cross-check of the gof module against SciPy: tests/gof_scipy.py draws
# samples with a fixed numpy seed, runs `check_gof --driver` (the Check
# executable doubles as the driver, see tests/check_gof.c) and compares the
# statistics and p-values with scipy.stats.kstest, cramervonmises and
# anderson.  It reports "skipped" (exit 77) when numpy/scipy cannot be
# imported or no interpreter was found.
if(SP_PYTHON3)
  add_test(NAME gof_scipy
    COMMAND ${SP_PYTHON3} ${CMAKE_CURRENT_SOURCE_DIR}/gof_scipy.py
            $<TARGET_FILE:check_gof>)
else()
  add_test(NAME gof_scipy
    COMMAND sh -c "echo 'skipped: no python3 interpreter found (SP_PYTHON3)'; exit 77")
endif()
set_tests_properties(gof_scipy PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 120)
