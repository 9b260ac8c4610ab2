# The shared summary table printer (src/app/summary_table.{h,cc}), unit-tested on its own.
add_executable(summary_table_tests ${CMAKE_CURRENT_LIST_DIR}/summary_table_test.cc
  ${PROJECT_SOURCE_DIR}/src/app/summary_table.cc)
target_include_directories(summary_table_tests PRIVATE ${LOOPWRIGHT_INCLUDE_DIRS})
target_link_libraries(summary_table_tests PRIVATE lw_doctest_main CLI11::CLI11)
loopwright_warnings(summary_table_tests)
add_test(NAME app_summary_table COMMAND summary_table_tests)
