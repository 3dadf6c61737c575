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

# The command on the demo data: the ranked table (k, log-likelihood, AICc,
# BIC, each statistic with its p-value, the verdict; the parameters with
# standard errors on the next line), the choice and its reason, the
# p-value legend and the caution must all be printed.
add_test(NAME fit_cli_table
  COMMAND scatterprop fit ${PROJECT_SOURCE_DIR}/data/wire_d.csv --column wire_d
          --families normal,lognormal,weibull,gumbel_min --bootstrap 99)
set_tests_properties(fit_cli_table PROPERTIES TIMEOUT 60
  PASS_REGULAR_EXPRESSION "rank +family +k +logL +AICc +BIC +A² +p +D +p +W² +p +verdict\n +1 +[a-z_0-9]+ +2 +[-0-9.]+ +[-0-9.]+ +[-0-9.]+ +[0-9.]+ +[<>]?[0-9.]+[a-z] .* chosen\n +[a-z]+ [-0-9.e+]+ ± .*Chosen: [a-z_0-9]+, .*why: [a-z_0-9]+: lowest AICc.*p-values:.*CAUTION")

# With --by: a table per lot, the pooled one, and the pooled choice fitted
# to each lot side by side.
add_test(NAME fit_cli_lots
  COMMAND scatterprop fit ${PROJECT_SOURCE_DIR}/data/wire_d.csv --column wire_d --by lot
          --families normal,lognormal --pvalues approximation)
set_tests_properties(fit_cli_lots PROPERTIES TIMEOUT 60
  PASS_REGULAR_EXPRESSION "lot = W24-117: n = 61.*lot = W24-131: n = 59.*pooled: n = 120.*Lots at a glance: [a-z]+ \\(the pooled choice\\) fitted to each lot\n +lot +n +own choice +A² p +parameters \\(± se\\)\n +W24-117 +61 .*\n +W24-131 +59 .*\n +pooled +120 ")
