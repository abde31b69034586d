# Drift (SPEC §7) checked end to end: drift_reference.py builds runs from the recorded predictions
# in fixtures/runs/ with `plumb score`, runs `plumb drift --json`, and recomputes every p-value,
# interval, verdict and case list from the two journals with Debian's numpy, scipy and
# statsmodels.
add_test(NAME drift_reference
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/drift_reference.py $<TARGET_FILE:plumb>
                 ${PROJECT_SOURCE_DIR}/fixtures/runs)
set_tests_properties(drift_reference PROPERTIES TIMEOUT 600)
