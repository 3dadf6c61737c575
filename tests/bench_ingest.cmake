# Benchmarks are built with the tests but are not ctests: they print figures
# (see tests/bench/README.md); `make bench` runs them.
add_executable(bench_ingest ${CMAKE_CURRENT_SOURCE_DIR}/bench/bench_ingest.c)
target_link_libraries(bench_ingest PRIVATE scatterprop_lib)
target_compile_definitions(bench_ingest PRIVATE _POSIX_C_SOURCE=200809L)
sp_warnings(bench_ingest)
