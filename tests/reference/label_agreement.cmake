# Grader calibration statistics (metrics/label_agreement.h) checked against Debian's
# python3-sklearn (cohen_kappa_score, confusion_matrix), scipy (spearmanr) and statsmodels
# (Wilson intervals) on a few hundred generated label sets, degenerate ones included. The
# coverage simulation of kappa's interval is a Catch2 test (tests/metrics/label_agreement_test.cc).
add_executable(label_agreement_driver ${CMAKE_CURRENT_LIST_DIR}/label_agreement_driver.cc)
target_link_libraries(label_agreement_driver PRIVATE plumb_metrics plumb_warnings)

add_test(NAME label_agreement_reference
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/label_agreement_reference.py
                 $<TARGET_FILE:label_agreement_driver>)
set_tests_properties(label_agreement_reference PROPERTIES TIMEOUT 300)
