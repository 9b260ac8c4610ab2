# Unit tests of the app layer's helpers (src/app without main.cc and the commands): doctest.
file(GLOB APP_UNIT_TESTS CONFIGURE_DEPENDS ${CMAKE_CURRENT_LIST_DIR}/test_*.cc)
add_executable(app_tests ${APP_UNIT_TESTS}
  ${PROJECT_SOURCE_DIR}/src/app/output.cc
  ${PROJECT_SOURCE_DIR}/src/app/model_source.cc
  ${PROJECT_SOURCE_DIR}/src/app/column_options.cc)
target_link_libraries(app_tests PRIVATE lw_doctest_main lw_identify lw_io lw_lti CLI11::CLI11)
target_compile_definitions(app_tests PRIVATE LOOPWRIGHT_SOURCE_DIR="${PROJECT_SOURCE_DIR}")
loopwright_warnings(app_tests)
add_test(NAME app_unit COMMAND app_tests)
