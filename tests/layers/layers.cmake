# The layer rule (DEVELOPERS.md, "Architecture"): metrics/ includes nothing from runner/, and each
# runner/ folder includes only from its own layer and those below it. The self-test plants two
# upward includes in a copy of the tree and passes only when the check catches both.
add_test(NAME "layers: every include points down" COMMAND ${PLUMB_PYTHON}
         ${CMAKE_CURRENT_SOURCE_DIR}/layers/check_layers.py ${PROJECT_SOURCE_DIR})
add_test(NAME "layers: the check catches a planted upward include" COMMAND ${PLUMB_PYTHON}
         ${CMAKE_CURRENT_SOURCE_DIR}/layers/check_layers.py --self-test ${PROJECT_SOURCE_DIR})
