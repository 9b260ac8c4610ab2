# End-to-end tests of the hardware commands (record, step-test, apply, verify, tune) against the
# emulator over a pseudo-terminal and loopback TCP (tests/app/cli_rig_test.py), one ctest each.
foreach(case zero_loss_pty zero_loss_tcp faults faults_tcp disconnect disconnect_tcp trip signals
             limits apply verify tune tune_dry_run cautions)
  add_test(NAME app_rig_${case}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/cli_rig_test.py $<TARGET_FILE:loopwright>
            ${PROJECT_SOURCE_DIR} ${CMAKE_CURRENT_BINARY_DIR}/app_rig/${case} ${case})
  set_tests_properties(app_rig_${case} PROPERTIES TIMEOUT 300)
endforeach()
