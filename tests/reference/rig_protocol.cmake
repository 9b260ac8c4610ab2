# Rig protocol CRC, %.9g printing and strict number parsing against Python's binascii and float.
add_executable(lw_rig_protocol_driver ${CMAKE_CURRENT_LIST_DIR}/rig_protocol_driver.cc)
target_link_libraries(lw_rig_protocol_driver PRIVATE lw_io)
loopwright_warnings(lw_rig_protocol_driver)
add_test(NAME reference_rig_protocol_python
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/rig_protocol_vs_python.py
                 $<TARGET_FILE:lw_rig_protocol_driver>)
set_tests_properties(reference_rig_protocol_python PROPERTIES TIMEOUT 120)
