# drift_bench times a whole drift report (runner/compare/drift.h) over 100,000 invented paired cases
# with B = 10000; not a test, run it by hand: build/tests/drift_bench [PAIRS] [RESAMPLES].
# The whole `plumb drift` process (reading two 100,000-case run directories made by `plumb score`,
# wall time and peak memory beside issue 15's targets) is timed by tests/bench/drift_process.py.
add_executable(drift_bench ${CMAKE_CURRENT_LIST_DIR}/drift_bench.cc)
target_link_libraries(drift_bench PRIVATE plumb_runner plumb_warnings)

# gate_simulation: the drift gate on invented paired runs (a documented Beta-difficulty model):
# A/A false-alarm rates, power at the printed detectable drop and at twice it, interval coverage,
# and the small-n cases of issue 15. Run the full tables by hand:
# build/tests/gate_simulation [--seed S]. CTest runs the quick version, which checks generous
# binomial bounds (a statistical check, not a timing).
add_executable(gate_simulation ${CMAKE_CURRENT_LIST_DIR}/gate_simulation.cc)
target_link_libraries(gate_simulation PRIVATE plumb_runner plumb_warnings)
add_test(NAME gate_simulation_check COMMAND gate_simulation --check)
set_tests_properties(gate_simulation_check PROPERTIES TIMEOUT 600)
