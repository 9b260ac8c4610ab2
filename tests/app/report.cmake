# Figures and the HTML report end to end (tests/app/report_test.py): fit --plot on every demo
# recording, and the report rendered by headless Chromium (skipped, loudly, without chromium).
foreach(mode figures browser)
  add_test(NAME report_${mode}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/report_test.py $<TARGET_FILE:loopwright>
            ${PROJECT_SOURCE_DIR} ${CMAKE_CURRENT_BINARY_DIR}/report/${mode} ${mode})
  set_tests_properties(report_${mode} PROPERTIES TIMEOUT 120 SKIP_RETURN_CODE 77)
endforeach()
