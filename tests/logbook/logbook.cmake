# The logbook's crash test: a writer killed with SIGKILL in the middle of writing loses nothing it
# committed, the file passes PRAGMA integrity_check (read by Python's own sqlite3 module), and a
# reader works while the writer writes.
add_executable(logbook_crash_helper ${CMAKE_CURRENT_LIST_DIR}/crash_helper.cc)
target_link_libraries(logbook_crash_helper PRIVATE lw_io)
loopwright_warnings(logbook_crash_helper)
add_test(NAME logbook_sigkill
  COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/kill_test.py
          $<TARGET_FILE:logbook_crash_helper> ${CMAKE_CURRENT_BINARY_DIR}/logbook_sigkill)
set_tests_properties(logbook_sigkill PROPERTIES TIMEOUT 120)
