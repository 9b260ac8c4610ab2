# Fuzz smoke run of the rig protocol parser and splitter (tests/fuzz/fuzz_protocol.sh, clang's
# libFuzzer); registered only when clang++ is found, like fuzz.cmake's targets.
find_program(LOOPWRIGHT_CLANGXX NAMES clang++ clang++-14)
if(LOOPWRIGHT_CLANGXX)
  add_test(NAME fuzz_protocol_smoke
           COMMAND bash ${CMAKE_CURRENT_LIST_DIR}/fuzz_protocol.sh ${LOOPWRIGHT_CLANGXX}
                   ${PROJECT_SOURCE_DIR} ${CMAKE_BINARY_DIR}/fuzz_protocol 10)
  set_tests_properties(fuzz_protocol_smoke PROPERTIES LABELS fuzz TIMEOUT 300)
endif()
