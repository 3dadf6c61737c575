# rng: comparison with the PCG authors' C++ implementation.
#
# tests/pcg_reference.cpp is built against pcg_random.hpp (Debian's
# libpcg-cpp-dev) and writes its outputs to a file (test rng_reference_output,
# a fixture); check_rng --reference FILE then reproduces every line with the
# C implementation (test check_rng_reference).  Without a C++ compiler or the
# header the comparison is registered anyway and reports "skipped" (ctest
# SKIP_RETURN_CODE 77), so it can never pass silently.
include(CheckLanguage)
check_language(CXX)
set(SP_RNG_REFERENCE_MISSING "")
if(NOT CMAKE_CXX_COMPILER)
  set(SP_RNG_REFERENCE_MISSING "no C++ compiler found")
else()
  enable_language(CXX)
  find_path(SP_PCG_CPP_INCLUDE_DIR pcg_random.hpp)
  if(NOT SP_PCG_CPP_INCLUDE_DIR)
    set(SP_RNG_REFERENCE_MISSING "pcg_random.hpp not found (install libpcg-cpp-dev)")
  endif()
endif()

if(SP_RNG_REFERENCE_MISSING)
  message(STATUS "scatterprop: PCG reference comparison skipped: ${SP_RNG_REFERENCE_MISSING}")
  add_test(NAME check_rng_reference
    COMMAND check_rng --reference-unavailable "${SP_RNG_REFERENCE_MISSING}")
  set_tests_properties(check_rng_reference PROPERTIES SKIP_RETURN_CODE 77)
else()
  add_executable(pcg_reference pcg_reference.cpp)
  set_target_properties(pcg_reference PROPERTIES
    CXX_STANDARD 11 CXX_STANDARD_REQUIRED ON CXX_EXTENSIONS OFF)
  # The header is a system header (its own warnings are not ours).
  target_include_directories(pcg_reference SYSTEM PRIVATE ${SP_PCG_CPP_INCLUDE_DIR})
  target_compile_options(pcg_reference PRIVATE -Wall -Wextra -Wpedantic -Wshadow)
  if(SP_WERROR)
    target_compile_options(pcg_reference PRIVATE -Werror)
  endif()

  set(SP_PCG_REFERENCE_OUT ${CMAKE_CURRENT_BINARY_DIR}/pcg_reference.txt)
  add_test(NAME rng_reference_output
    COMMAND pcg_reference ${SP_PCG_REFERENCE_OUT})
  set_tests_properties(rng_reference_output PROPERTIES
    FIXTURES_SETUP rng_reference TIMEOUT 60)
  add_test(NAME check_rng_reference
    COMMAND check_rng --reference ${SP_PCG_REFERENCE_OUT})
  set_tests_properties(check_rng_reference PROPERTIES
    FIXTURES_REQUIRED rng_reference TIMEOUT 60
    ENVIRONMENT "CK_DEFAULT_TIMEOUT=60")
endif()
