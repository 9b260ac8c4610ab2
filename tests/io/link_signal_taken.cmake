# The pty link's fallback reader when the program already handles the link's wake signal
# (tests/io/signal_taken): its own executable, because the link decides once per process.
add_executable(link_signal_taken_tests ${CMAKE_CURRENT_LIST_DIR}/signal_taken/test_link_signal_taken.cc)
target_link_libraries(link_signal_taken_tests PRIVATE lw_doctest_main lw_io)
loopwright_warnings(link_signal_taken_tests)
add_test(NAME io_link_signal_taken COMMAND link_signal_taken_tests)
set_tests_properties(io_link_signal_taken PROPERTIES TIMEOUT 120)
