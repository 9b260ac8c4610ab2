# `loopwright check` against closed-loop responses computed by scipy (signal.step without dead
# time, solve_ivp by the method of steps with it): measured metrics on 1 %-noise recordings
# agree with the noise-free truth, predictions match it, the right plant is confirmed.
add_test(NAME check_metrics_vs_scipy
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/check_metrics.py
                 $<TARGET_FILE:loopwright> ${CMAKE_CURRENT_BINARY_DIR}/check_metrics)
set_tests_properties(check_metrics_vs_scipy PROPERTIES LABELS "check" TIMEOUT 120)
