# End-to-end tests of the loopwright binary (tests/app/cli_test.py), one ctest per case.
foreach(case version help simulate_open simulate_closed simulate_no_peak simulate_csv_input errors recordings)
  if(case STREQUAL "recordings")
    set(name app_recordings_determinism)
  else()
    set(name app_cli_${case})
  endif()
  add_test(NAME ${name}
    COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/cli_test.py $<TARGET_FILE:loopwright>
            ${PROJECT_SOURCE_DIR} ${CMAKE_CURRENT_BINARY_DIR}/app_cli/${case} ${case})
endforeach()
