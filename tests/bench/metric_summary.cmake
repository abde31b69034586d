# metric_summary_bench times SummarizeMetric's bootstrap interval over 20,000 invented cases
# (grouped bootstrap against the index bootstrap it replaced) and measures the costs the grouped
# plan charges; not a test, run it by hand: build/tests/metric_summary_bench [CASES] [RESAMPLES].
add_executable(metric_summary_bench ${CMAKE_CURRENT_LIST_DIR}/metric_summary_bench.cc)
target_link_libraries(metric_summary_bench PRIVATE plumb_metrics plumb_warnings)
