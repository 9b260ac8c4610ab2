# Closed-loop refit against scipy (solve_ivp by the method of steps): tests/reference/closed_loop_fit.py.
add_test(NAME reference_closed_loop_fit
  COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/closed_loop_fit.py
          $<TARGET_FILE:loopwright> ${CMAKE_CURRENT_BINARY_DIR}/reference_closed_loop_fit)
