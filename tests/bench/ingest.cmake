# Rig link ingest benchmark (prints a table; never fails on timing): sample lines per second
# with CRC checking over a pseudo-terminal and loopback TCP, and host CPU at 1 kHz. Run with
# ./bootstrap bench or ctest -L bench.
add_executable(bench_ingest ${CMAKE_CURRENT_LIST_DIR}/bench_ingest.cc)
target_link_libraries(bench_ingest PRIVATE lw_io)
loopwright_warnings(bench_ingest)
add_test(NAME bench_ingest COMMAND bench_ingest 1000000 5 3)
set_tests_properties(bench_ingest PROPERTIES LABELS bench TIMEOUT 600)
