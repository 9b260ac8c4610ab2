# Fuzz smoke run (libFuzzer, clang): builds tests/fuzz/fuzz_*.cc with the address and
# undefined-behaviour sanitizers straight from the sources and runs each target for a few
# seconds on its seed corpus (tests/fuzz/corpus_*). Fails on any crash or sanitizer report.
# Longer runs by hand: tests/fuzz/fuzz_smoke.sh clang++ <source> <work dir> <seconds>.
find_program(LOOPWRIGHT_CLANGXX NAMES clang++ clang++-14)
if(LOOPWRIGHT_CLANGXX)
  add_test(NAME fuzz_smoke
           COMMAND bash ${CMAKE_CURRENT_LIST_DIR}/fuzz_smoke.sh ${LOOPWRIGHT_CLANGXX}
                   ${PROJECT_SOURCE_DIR} ${CMAKE_BINARY_DIR}/fuzz 10)
  set_tests_properties(fuzz_smoke PROPERTIES LABELS fuzz TIMEOUT 900)
else()
  message(STATUS "clang++ not found: the fuzz smoke test is not registered")
endif()
