# Reference checks of the gain-band designer (design/, `loopwright band`): a brute-force
# numpy.roots sweep of 20 000 gains against the exact locus band edges.
add_test(NAME design_band_vs_numpy_sweep
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/design_sweep.py
                 $<TARGET_FILE:loopwright>)
set_tests_properties(design_band_vs_numpy_sweep PROPERTIES TIMEOUT 120)

# The sampled loop's response band (`band --sample-time`) against scipy.signal.cont2discrete:
# at every edge, 1 % inside meets the limiting spec and 1 % outside breaks it.
add_test(NAME design_sampled_band_vs_scipy
         COMMAND ${LOOPWRIGHT_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/sampled_band_vs_scipy.py
                 $<TARGET_FILE:loopwright>)
set_tests_properties(design_sampled_band_vs_scipy PROPERTIES TIMEOUT 120)
