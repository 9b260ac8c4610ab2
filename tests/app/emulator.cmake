# `loopwright emulate` end to end (tests/app/emulator_test.py): a host written in Python talks to
# the emulator over a pseudo-terminal and loopback TCP; closed forms and scipy are the reference.
foreach(case open_pty closed_tcp model_file stream_1khz faults watchdog_sigkill disconnect errors)
  add_test(NAME emulator_${case}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/emulator_test.py
            $<TARGET_FILE:loopwright> ${CMAKE_CURRENT_BINARY_DIR}/emulator/${case} ${case})
  set_tests_properties(emulator_${case} PROPERTIES TIMEOUT 90)
endforeach()
