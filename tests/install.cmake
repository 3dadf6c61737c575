# The install rules and the pkg-config file, used as another project would.
# Not in sanitizer builds: the installed library then needs the sanitizer
# runtimes, which a plain consumer does not link.
if(NOT SP_SANITIZE)
  add_test(NAME install_pkgconfig
    COMMAND sh ${CMAKE_CURRENT_SOURCE_DIR}/install_check.sh ${PROJECT_BINARY_DIR})
  set_tests_properties(install_pkgconfig PROPERTIES TIMEOUT 120)
endif()
