# engine: the benchmark (tests/bench/bench_engine.c, not a ctest; it prints
# figures and ratios, tests/bench/bench_engine.py adds the numpy comparison).
add_executable(bench_engine ${CMAKE_CURRENT_SOURCE_DIR}/bench/bench_engine.c)
target_link_libraries(bench_engine PRIVATE scatterprop_lib)
target_compile_definitions(bench_engine PRIVATE _POSIX_C_SOURCE=200809L)
sp_warnings(bench_engine)
