# Simulation against scipy: a driver executable and the reference script that runs it.
add_executable(lw_simulate_driver ${CMAKE_CURRENT_LIST_DIR}/simulate_driver.cc)
target_link_libraries(lw_simulate_driver PRIVATE lw_lti)
loopwright_warnings(lw_simulate_driver)
add_test(NAME reference_simulate_scipy
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/simulate_vs_scipy.py
                 $<TARGET_FILE:lw_simulate_driver>)
set_tests_properties(reference_simulate_scipy PROPERTIES TIMEOUT 120)
