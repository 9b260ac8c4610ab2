# End-to-end tests of `loopwright check` (tests/app/cli_check_test.py), one ctest per case.
foreach(case reruns saturated demo no_peak errors)
  add_test(NAME app_check_${case}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/cli_check_test.py
            $<TARGET_FILE:loopwright> ${PROJECT_SOURCE_DIR}
            ${CMAKE_CURRENT_BINARY_DIR}/app_check/${case} ${case})
  set_tests_properties(app_check_${case} PROPERTIES LABELS "check" TIMEOUT 300)
endforeach()
