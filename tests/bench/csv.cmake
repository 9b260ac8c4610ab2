# CSV read benchmark (prints a table; never fails on timing). Run with ./bootstrap bench or
# ctest -L bench. The generated recordings (about 25 and 250 MB) stay in <build>/bench.
add_executable(bench_csv ${CMAKE_CURRENT_LIST_DIR}/bench_csv.cc)
target_link_libraries(bench_csv PRIVATE lw_io)
loopwright_warnings(bench_csv)
add_test(NAME bench_csv COMMAND bench_csv ${CMAKE_BINARY_DIR}/bench 1000000 10000000)
set_tests_properties(bench_csv PROPERTIES LABELS bench TIMEOUT 900)
