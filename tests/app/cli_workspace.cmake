# End-to-end tests of the rig workspace (init, log, drift and logging from fit):
# tests/app/cli_workspace_test.py, one ctest per case.
foreach(case init errors log drift)
  add_test(NAME app_workspace_${case}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/cli_workspace_test.py
            $<TARGET_FILE:loopwright> ${PROJECT_SOURCE_DIR}
            ${CMAKE_CURRENT_BINARY_DIR}/app_workspace/${case} ${case})
endforeach()
