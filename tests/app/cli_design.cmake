# End-to-end tests of `band` and `predict` (tests/app/cli_design_test.py), one ctest per case:
# textbook locus values, scipy step metrics, the infeasible case, bad input, figures, saved files
# read by the report, a response without a peak, a band of [0, inf) (no gain recommended) and
# colour on a terminal.
foreach(case ogata_band ogata_predict no_peak infeasible unbounded_band errors figures save_report
             colour reverse_acting unstable_predict unstable_plant sampled_recommendation region_only)
  add_test(NAME app_design_${case}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/cli_design_test.py
            $<TARGET_FILE:loopwright> ${PROJECT_SOURCE_DIR}
            ${CMAKE_CURRENT_BINARY_DIR}/app_design/${case} ${case})
  set_tests_properties(app_design_${case} PROPERTIES TIMEOUT 300)
endforeach()
