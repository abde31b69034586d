# Every Catch2 test name survives CTest discovery (no ";" or backslash, no leading "-").
add_test(NAME lint.test_names
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_SOURCE_DIR}/reference/check_test_names.py
                 ${CMAKE_CURRENT_SOURCE_DIR})
