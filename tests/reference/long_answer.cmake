# Differential check of the long-answer metrics (token_recall, covers_gold, knowledge_f1,
# cited_support) against a stdlib-only Python transcription of their definitions
# (long_answer_reference.py), run by Debian's Python 3 on generated cases.
add_executable(long_answer_driver ${CMAKE_CURRENT_LIST_DIR}/long_answer_driver.cc)
target_link_libraries(long_answer_driver PRIVATE plumb_metrics plumb_warnings)
add_test(NAME reference.long_answer
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/long_answer_reference.py
                 --driver $<TARGET_FILE:long_answer_driver>)
set_tests_properties(reference.long_answer PROPERTIES TIMEOUT 600)
