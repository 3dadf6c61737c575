# The report in a real browser: report_chromium writes a sample report
# (every chart kind rendered by gnuplot, hostile text from "inputs"), and
# tests/report_chromium.sh loads it in headless Chromium (Debian package
# chromium), checks the console stayed quiet, that key figures are in the
# DOM and that no hostile markup became an element, and takes a
# screenshot.  The test reports "skipped" (exit 77) when chromium is not
# installed.
add_executable(report_chromium report_chromium.c)
target_link_libraries(report_chromium PRIVATE scatterprop_lib)
target_compile_definitions(report_chromium PRIVATE _POSIX_C_SOURCE=200809L)
sp_warnings(report_chromium)

find_program(SP_SH sh REQUIRED)
add_test(NAME report_chromium
  COMMAND ${SP_SH} ${CMAKE_CURRENT_SOURCE_DIR}/report_chromium.sh
          $<TARGET_FILE:report_chromium> ${CMAKE_CURRENT_BINARY_DIR}/report_chromium.out
          ${PROJECT_SOURCE_DIR}/plots)
set_tests_properties(report_chromium PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 240)
