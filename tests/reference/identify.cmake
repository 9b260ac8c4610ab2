# Identification checks against scipy-made data and end-to-end refusals (loopwright fit).
add_test(NAME identify_recovery
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/identify_recovery.py
                 $<TARGET_FILE:loopwright> ${CMAKE_CURRENT_BINARY_DIR}/identify_recovery)
add_test(NAME identify_bad_recordings
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/identify_bad_recordings.py
                 $<TARGET_FILE:loopwright> ${CMAKE_CURRENT_BINARY_DIR}/identify_bad_recordings)
add_test(NAME identify_coverage
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/identify_coverage.py
                 $<TARGET_FILE:loopwright> ${CMAKE_CURRENT_BINARY_DIR}/identify_coverage 200)
set_tests_properties(identify_recovery identify_bad_recordings identify_coverage
                     PROPERTIES LABELS "identify" TIMEOUT 120)
