# Benchmark of the gain-band designer (tables, not pass/fail): `./bootstrap bench`.
add_executable(bench_band ${CMAKE_CURRENT_LIST_DIR}/bench_band.cc)
target_link_libraries(bench_band PRIVATE lw_design)
loopwright_warnings(bench_band)
add_test(NAME band_bench
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/bench_band.py
                 $<TARGET_FILE:bench_band>)
set_tests_properties(band_bench PROPERTIES LABELS bench TIMEOUT 600)
