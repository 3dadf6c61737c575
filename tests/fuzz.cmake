# check_fuzz replays every seed (tests/fuzz/corpus/<reader>/) and every kept
# crash input (tests/fuzz/regress/<reader>/) through the libFuzzer harnesses
# in every build, plain and sanitizer, and under valgrind in CI: the
# harnesses are compiled into it with their entry points renamed.
foreach(reader ingest model record)
  set(src ${PROJECT_SOURCE_DIR}/tests/fuzz/fuzz_${reader}.c)
  target_sources(check_fuzz PRIVATE ${src})
  set_source_files_properties(${src} PROPERTIES
    COMPILE_DEFINITIONS "LLVMFuzzerTestOneInput=sp_fuzz_${reader}")
endforeach()
