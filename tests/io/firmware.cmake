# The example rig firmware (io/firmware/rig_firmware.c) compiled as strict C99 with the host's C
# compiler, linked against a fake board and checked line by line against the C++ protocol parser.
enable_language(C)
add_library(rig_firmware_c STATIC ${PROJECT_SOURCE_DIR}/io/firmware/rig_firmware.c)
set_target_properties(rig_firmware_c PROPERTIES C_STANDARD 99 C_STANDARD_REQUIRED ON
                                                C_EXTENSIONS OFF)
target_compile_options(rig_firmware_c PRIVATE -Wall -Wextra -pedantic -Werror)
add_executable(firmware_tests ${CMAKE_CURRENT_LIST_DIR}/firmware/test_rig_firmware.cc)
target_link_libraries(firmware_tests PRIVATE lw_doctest_main lw_io rig_firmware_c)
loopwright_warnings(firmware_tests)
add_test(NAME firmware_example COMMAND firmware_tests)
