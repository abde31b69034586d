# normalize_bench times the squad profile's per-case answer work (NormalizeGold, ScoreAnswer,
# NormalizeSquadTokens, TokenF1) on invented short English answers with Google Benchmark
# (Debian's libbenchmark-dev, installed by .ci/deps); not a test, run it by hand:
# build/tests/normalize_bench --benchmark_repetitions=9 --benchmark_report_aggregates_only=true
find_package(benchmark REQUIRED)
add_executable(normalize_bench ${CMAKE_CURRENT_LIST_DIR}/normalize_bench.cc)
target_link_libraries(normalize_bench PRIVATE plumb_metrics plumb_warnings benchmark::benchmark)
