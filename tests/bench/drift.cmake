# drift_bench times a whole drift report (runner/compare/drift.h) over 100,000 invented paired cases
# with B = 10000; not a test, run it by hand: build/tests/drift_bench [PAIRS] [RESAMPLES].
add_executable(drift_bench ${CMAKE_CURRENT_LIST_DIR}/drift_bench.cc)
target_link_libraries(drift_bench PRIVATE plumb_runner plumb_warnings)
