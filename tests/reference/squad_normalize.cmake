# Differential check of the `squad` normalization profile and the answer metrics against a
# Python transcription of the official SQuAD evaluation (squad_normalize_reference.py), run by
# Debian's Python 3. The driver reads hex-encoded strings on stdin and prints plumb's values.
add_executable(squad_normalize_driver ${CMAKE_CURRENT_LIST_DIR}/squad_normalize_driver.cc)
target_link_libraries(squad_normalize_driver PRIVATE plumb_metrics plumb_warnings)
add_test(NAME reference.squad_normalize
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/squad_normalize_reference.py
                 --driver $<TARGET_FILE:squad_normalize_driver>)
set_tests_properties(reference.squad_normalize PROPERTIES TIMEOUT 600)
