# Differential check of the `mlqa` normalization profile against a stdlib-only Python
# transcription (from memory) of the MLQA evaluation script's normalization
# (mlqa_normalize_reference.py), run by Debian's Python 3: every code point's character classes,
# then 5,000 generated strings per language (en es de vi ar hi zh). The seed is fixed here so CI
# is repeatable; run the script by hand without --seed to draw a fresh one.
add_executable(mlqa_normalize_driver ${CMAKE_CURRENT_LIST_DIR}/mlqa_normalize_driver.cc)
target_link_libraries(mlqa_normalize_driver PRIVATE plumb_metrics plumb_warnings)
add_test(NAME reference.mlqa_normalize
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/mlqa_normalize_reference.py
                 --driver $<TARGET_FILE:mlqa_normalize_driver> --seed 61 --count 5000)
set_tests_properties(reference.mlqa_normalize PROPERTIES TIMEOUT 600)
