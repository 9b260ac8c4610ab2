# End-to-end tests of fit --compare / --band / --closed-loop / auto's near-tie rule (tests/app/cli_refit_test.py).
foreach(case compare compare_same band closed_loop units_and_text errors near_tie integrating_tie integrating_pulse physical_bounds)
  add_test(NAME app_refit_${case}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/cli_refit_test.py
            $<TARGET_FILE:loopwright> ${PROJECT_SOURCE_DIR}
            ${CMAKE_CURRENT_BINARY_DIR}/app_refit/${case} ${case})
endforeach()
