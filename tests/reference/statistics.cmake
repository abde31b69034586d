# Statistics (SPEC §6.5, §6.6, §7) checked against Debian's numpy, scipy and statsmodels:
# statistics_driver prints plumb_metrics' values for the inputs statistics_reference.py sends it,
# and the script recomputes each with the reference libraries. drift_stats_bench times the drift
# bootstrap (not a test; run it by hand).
add_executable(statistics_driver ${CMAKE_CURRENT_LIST_DIR}/statistics_driver.cc)
target_link_libraries(statistics_driver PRIVATE plumb_metrics plumb_warnings)

add_test(NAME statistics_reference
         COMMAND ${PLUMB_PYTHON} ${CMAKE_CURRENT_LIST_DIR}/statistics_reference.py
                 $<TARGET_FILE:statistics_driver>)
# Several minutes of CPU (exact Wilcoxon enumerations, B = 100,000 bootstraps); the limit leaves
# room for a shared two-core machine under load.
set_tests_properties(statistics_reference PROPERTIES TIMEOUT 1500)

add_executable(drift_stats_bench ${CMAKE_CURRENT_LIST_DIR}/../bench/drift_stats_bench.cc)
target_link_libraries(drift_stats_bench PRIVATE plumb_metrics plumb_warnings)
