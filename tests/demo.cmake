# The demo data of data/ against their script and their description
# (tests/demo_data_check.py).  Needs only Python's standard library; without
# an interpreter the test reports "skipped" (exit 77), never passed.
if(SP_PYTHON3)
  add_test(NAME demo_data
    COMMAND ${SP_PYTHON3} ${CMAKE_CURRENT_SOURCE_DIR}/demo_data_check.py
            ${PROJECT_SOURCE_DIR} $<TARGET_FILE:scatterprop>)
else()
  add_test(NAME demo_data COMMAND sh -c "echo 'demo_data: no python3 interpreter found'; exit 77")
endif()
set_tests_properties(demo_data PROPERTIES TIMEOUT 60 SKIP_RETURN_CODE 77)
