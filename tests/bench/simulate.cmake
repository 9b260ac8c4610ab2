# Simulation benchmark: prints a table, never fails on timing (`./bootstrap bench`).
add_executable(bench_simulate ${CMAKE_CURRENT_LIST_DIR}/bench_simulate.cc)
target_link_libraries(bench_simulate PRIVATE lw_lti)
loopwright_warnings(bench_simulate)
add_test(NAME bench_simulate COMMAND bench_simulate)
set_tests_properties(bench_simulate PROPERTIES LABELS bench)
