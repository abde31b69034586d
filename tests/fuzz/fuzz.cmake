# Fuzz targets (tests/fuzz/*_fuzz.cc, each defining LLVMFuzzerTestOneInput). Every build links
# each with replay_main.cc into NAME_fuzz_replay, which CTest runs over the seed corpus in
# tests/fuzz/corpus/NAME and a fixed number of seeded mutations of it. With
# -DPLUMB_LIBFUZZER=ON (the `fuzz` preset, clang) each is also built against libFuzzer as
# NAME_fuzz, for coverage-guided fuzzing by hand (DEVELOPERS.md).
file(GLOB fuzz_targets CONFIGURE_DEPENDS ${CMAKE_CURRENT_SOURCE_DIR}/fuzz/*_fuzz.cc)
foreach(source ${fuzz_targets})
  get_filename_component(name ${source} NAME_WE)
  string(REGEX REPLACE "_fuzz$" "" corpus ${name})
  add_executable(${name}_replay ${source} ${CMAKE_CURRENT_SOURCE_DIR}/fuzz/replay_main.cc)
  target_link_libraries(${name}_replay PRIVATE plumb_runner plumb_warnings)
  # A report input runs `plumb score` twice and `plumb drift` once (about 5 ms); the others
  # take microseconds.
  set(mutations 20000)
  if(corpus STREQUAL "report")
    set(mutations 2000)
  endif()
  add_test(NAME fuzz_replay_${corpus}
           COMMAND ${name}_replay --mutations ${mutations} ${CMAKE_CURRENT_SOURCE_DIR}/fuzz/corpus/${corpus}
           WORKING_DIRECTORY ${CMAKE_CURRENT_BINARY_DIR})
  set_tests_properties(fuzz_replay_${corpus} PROPERTIES TIMEOUT 300 LABELS fuzz)
  if(PLUMB_LIBFUZZER)
    add_executable(${name} ${source})
    target_link_libraries(${name} PRIVATE plumb_runner plumb_warnings)
    target_link_options(${name} PRIVATE -fsanitize=fuzzer)
  endif()
endforeach()
