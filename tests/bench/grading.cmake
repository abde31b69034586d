# grading_bench times grading through the verdict cache over 100,000 answers: a cold pass with a
# grader that answers at once (fixtures/demo-grader, 4 grader jobs) and a warm pass from the
# cache, each figure printed beside its target. Not a test; run it by hand from the repository
# root: build/tests/grading_bench [ANSWERS] [JOBS].
add_executable(grading_bench ${CMAKE_CURRENT_LIST_DIR}/grading_bench.cc)
target_link_libraries(grading_bench PRIVATE plumb_runner plumb_warnings)
add_dependencies(grading_bench demo-grader)
