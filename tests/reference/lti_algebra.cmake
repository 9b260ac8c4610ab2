# Polynomial roots, Padé approximants and plant formulas against numpy/scipy: a driver and the
# reference script that runs it.
add_executable(lw_lti_algebra_driver ${CMAKE_CURRENT_LIST_DIR}/lti_algebra_driver.cc)
target_link_libraries(lw_lti_algebra_driver PRIVATE lw_lti)
loopwright_warnings(lw_lti_algebra_driver)
add_test(NAME reference_lti_algebra_numpy
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/lti_algebra_vs_numpy.py
                 $<TARGET_FILE:lw_lti_algebra_driver>)
set_tests_properties(reference_lti_algebra_numpy PROPERTIES TIMEOUT 60)
