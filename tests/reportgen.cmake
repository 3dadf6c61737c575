# The demo's report in a real browser (reportgen_chromium).
#
# Included by tests/CMakeLists.txt, this file registers the test; run by
# that test with "cmake -P", it is the test: it runs the demo scenario
# (data/run_demo.sh) into a scratch folder, writes the demo's report with
# "scatterprop report", loads it in headless Chromium (Debian package
# chromium) and checks that the console stayed quiet, that the key figures
# printed by "scatterprop propagate" and the data files' SHA-256 are in the
# DOM, that every chart is inline SVG, and that no script, image or
# external reference is. It reports "skipped" (exit 77) when chromium is
# not installed.
if(NOT CMAKE_SCRIPT_MODE_FILE)
  find_program(SP_CHROMIUM NAMES chromium chromium-browser)
  if(SP_CHROMIUM)
    add_test(NAME reportgen_chromium
      COMMAND ${CMAKE_COMMAND} -DSP_CLI=$<TARGET_FILE:scatterprop>
              -DSP_SRC=${PROJECT_SOURCE_DIR} -DSP_CHROMIUM=${SP_CHROMIUM}
              -DSP_OUT=${CMAKE_CURRENT_BINARY_DIR}/reportgen_chromium.out
              -P ${CMAKE_CURRENT_LIST_FILE})
  else()
    add_test(NAME reportgen_chromium
      COMMAND sh -c "echo 'SKIP: chromium is not installed (Debian: apt-get install chromium)'; exit 77")
  endif()
  # The demo's fits run their bootstrap p-values: about half a minute on two
  # cores, most of this test's time.
  set_tests_properties(reportgen_chromium PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 600
    ENVIRONMENT "SCATTERPROP_PLOTS=${PROJECT_SOURCE_DIR}/plots")
  return()
endif()

# ---- script mode ------------------------------------------------------------

function(fail)
  message(FATAL_ERROR "FAIL: ${ARGN}")
endfunction()

file(REMOVE_RECURSE ${SP_OUT})
file(MAKE_DIRECTORY ${SP_OUT})
set(PROFILE ${SP_OUT}/profile)

# Runs chromium on FILE with the flags every run shares; its log (stderr)
# goes to LOG.
function(run_chromium file log)
  file(REMOVE_RECURSE ${PROFILE})
  execute_process(
    COMMAND ${SP_CHROMIUM} --headless --no-sandbox --disable-gpu --disable-quic
            --no-first-run --disable-background-networking --disable-component-update
            --disable-sync --user-data-dir=${PROFILE} --enable-logging=stderr --v=0
            ${ARGN} file://${file}
    OUTPUT_VARIABLE out ERROR_FILE ${log} RESULT_VARIABLE rc TIMEOUT 120)
  if(NOT rc EQUAL 0)
    fail("chromium exited with ${rc} on ${file} (log: ${log})")
  endif()
  set(CHROMIUM_OUT "${out}" PARENT_SCOPE)
endfunction()

# 1. The harness sees console messages at all: a probe page that logs and
#    throws must show up in the log, or a quiet log would prove nothing.
file(WRITE ${SP_OUT}/probe.html "<!DOCTYPE html><html><head><meta charset=\"utf-8\">"
  "<title>probe</title></head><body><script>console.log(\"sp-probe\"); "
  "sp_undefined_function();</script></body></html>\n")
run_chromium(${SP_OUT}/probe.html ${SP_OUT}/probe.log --dump-dom)
file(READ ${SP_OUT}/probe.log probe)
if(NOT probe MATCHES "CONSOLE.*sp-probe" OR NOT probe MATCHES "Uncaught")
  fail("console messages do not reach chromium's log (see ${SP_OUT}/probe.log)")
endif()

# 2. The demo, then its report (the run repeated from its record).
execute_process(COMMAND sh ${SP_SRC}/data/run_demo.sh ${SP_CLI} demo-out
  WORKING_DIRECTORY ${SP_OUT} OUTPUT_VARIABLE demo ERROR_VARIABLE demo_err
  RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  fail("the demo failed (${rc}):\n${demo_err}")
endif()
execute_process(COMMAND ${SP_CLI} report demo-out/run/run.json --force
  WORKING_DIRECTORY ${SP_OUT} OUTPUT_VARIABLE rep ERROR_VARIABLE rep_err RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  fail("scatterprop report failed (${rc}):\n${rep_err}")
endif()
if(NOT rep MATCHES "report written to ([^:]+): ([0-9]+) figures, ([0-9]+) drawn; the repeated run matched the record")
  fail("unexpected report output:\n${rep}")
endif()
set(REPORT ${SP_OUT}/${CMAKE_MATCH_1})
set(nfig ${CMAKE_MATCH_2})
set(ndrawn ${CMAKE_MATCH_3})

# 3. The page in the browser.
run_chromium(${REPORT} ${SP_OUT}/dom.log --dump-dom)
set(DOM "${CHROMIUM_OUT}")
file(WRITE ${SP_OUT}/dom.html "${DOM}")
file(READ ${SP_OUT}/dom.log log)
if(log MATCHES "CONSOLE|Uncaught")
  fail("the report logged to the console (see ${SP_OUT}/dom.log)")
endif()

function(has text)
  string(FIND "${DOM}" "${text}" at)
  if(at EQUAL -1)
    fail("the DOM lacks: ${text}")
  endif()
endfunction()
function(lacks regex)
  if(DOM MATCHES "${regex}")
    fail("the DOM holds ${regex}")
  endif()
endfunction()

has("CAUTION: these are statistical estimates")
has("20261201")
# The figures as 'propagate' printed them (the same Monte Carlo rounding):
# each output's mean with its standard error, the violations of the limit,
# the model's SHA-256.
string(REGEX MATCHALL "mean +[0-9.]+ +\\(standard error [0-9.]+\\)" means "${demo}")
list(LENGTH means nmeans)
if(NOT nmeans EQUAL 2)
  fail("expected two means in the demo's output, found ${nmeans}")
endif()
foreach(m IN LISTS means)
  string(REGEX REPLACE "mean +([0-9.]+) +\\(standard error ([0-9.]+)\\)" "\\1 ± \\2" want "${m}")
  has("${want}")
endforeach()
if(NOT demo MATCHES "violated by ([0-9]+) of ([0-9]+) samples")
  fail("no limit line in the demo's output")
endif()
has(">${CMAKE_MATCH_1}<")
if(NOT demo MATCHES "model sha256 ([0-9a-f]+)")
  fail("no model SHA-256 in the demo's output")
endif()
has("${CMAKE_MATCH_1}")
foreach(csv wire_d coil_dm shear_modulus assembly_load)
  file(SHA256 ${SP_SRC}/data/${csv}.csv h)
  has("${h}")
endforeach()
# The fits' tables as 'scatterprop fit' prints them: a bootstrap p-value
# below 0.001 as "< 0.001" (the demo's 3-parameter Weibull of the pooled
# wire), the chosen candidate named.
has("&lt;&nbsp;0.001</td>")
has("<td class=\"w\">chosen</td>")
# Every drawn chart is inline SVG; nothing active or external.
string(REGEX MATCHALL "<svg class=\"chart\"" charts "${DOM}")
list(LENGTH charts ncharts)
if(NOT ncharts EQUAL ndrawn)
  fail("${ndrawn} charts drawn but ${ncharts} inline SVG charts in the DOM")
endif()
execute_process(COMMAND gnuplot --version RESULT_VARIABLE gp OUTPUT_QUIET ERROR_QUIET)
if(gp EQUAL 0 AND NOT ndrawn EQUAL nfig)
  fail("gnuplot is installed but only ${ndrawn} of ${nfig} figures were drawn")
endif()
lacks("<script")
lacks("<img")
lacks("<[^>]* on[a-z]+=")
lacks("(src|href)=\"(https?:|//|file:)")

# 4. A screenshot for a look.
run_chromium(${REPORT} ${SP_OUT}/shot.log --screenshot=${SP_OUT}/report.png
  --window-size=1000,1400 --hide-scrollbars)
file(READ ${SP_OUT}/shot.log log)
if(log MATCHES "CONSOLE|Uncaught")
  fail("console output while painting (see ${SP_OUT}/shot.log)")
endif()
if(NOT EXISTS ${SP_OUT}/report.png)
  fail("no screenshot")
endif()
file(READ ${SP_OUT}/report.png magic LIMIT 4 HEX)
if(NOT magic STREQUAL "89504e47")
  fail("the screenshot is not a PNG")
endif()
message("PASS: the demo's report (${nfig} figures, ${ndrawn} drawn) loads cleanly in chromium")
