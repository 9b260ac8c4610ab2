# Benchmark of `fit` against scipy.optimize.least_squares (prints a table; never pass/fail).
add_executable(bench_fit ${CMAKE_CURRENT_LIST_DIR}/bench_fit.cc
                         ${CMAKE_CURRENT_LIST_DIR}/bench_fit_floor.cc)
target_link_libraries(bench_fit PRIVATE lw_identify lw_io)
loopwright_warnings(bench_fit)
add_test(NAME bench_fit
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/bench_fit.py
                 $<TARGET_FILE:bench_fit> ${CMAKE_CURRENT_BINARY_DIR}/bench_fit_data)
set_tests_properties(bench_fit PROPERTIES LABELS bench TIMEOUT 600)
