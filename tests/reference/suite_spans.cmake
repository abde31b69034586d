# Differential check of the suite loader's quote location and code-point offsets against
# Python's own string indexing (suite_spans_reference.py, Debian's Python 3): generated documents
# with accented, CJK and astral characters and runs of Unicode White_Space, quotes exact and
# whitespace-altered, explicit offsets, in YAML and in a JSONL include. Fixed seed for CI; run the
# script by hand without --seed to draw a fresh one.
add_executable(suite_spans_driver ${CMAKE_CURRENT_LIST_DIR}/suite_spans_driver.cc)
target_link_libraries(suite_spans_driver PRIVATE plumb_runner plumb_warnings)
add_test(NAME reference.suite_spans
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/suite_spans_reference.py
                 --driver $<TARGET_FILE:suite_spans_driver> --seed 17 --cases 400)
set_tests_properties(reference.suite_spans PROPERTIES TIMEOUT 300)
