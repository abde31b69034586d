# Browser tests of the HTML report (SPEC §10): npm's playwright-core drives Debian's chromium,
# headless, over pages written by html-report-driver from runs that `plumb score` makes. Needs
# node and tests/browser/node_modules (.ci/deps runs `npm install` there); screenshots land in
# ${CMAKE_BINARY_DIR}/browser-artifacts for review.

add_executable(html-report-driver ${CMAKE_CURRENT_LIST_DIR}/report_driver.cc)
target_link_libraries(html-report-driver PRIVATE plumb_runner plumb_warnings)
set_target_properties(html-report-driver PROPERTIES RUNTIME_OUTPUT_DIRECTORY ${PROJECT_BINARY_DIR})

find_program(PLUMB_NODE node)
if(NOT PLUMB_NODE)
  message(STATUS "node not found: the browser tests of the HTML report are not registered")
  return()
endif()

set(PLUMB_BROWSER_ARTIFACTS ${CMAKE_BINARY_DIR}/browser-artifacts)
set(PLUMB_BROWSER_ARGS
    --plumb $<TARGET_FILE:plumb> --driver $<TARGET_FILE:html-report-driver>
    --source ${PROJECT_SOURCE_DIR} --artifacts ${PLUMB_BROWSER_ARTIFACTS})

foreach(script report_page report_hostile report_drift report_large report_demo report_long_text
               report_first_screen report_compare)
  add_test(NAME browser_${script}
           COMMAND ${PLUMB_NODE} ${CMAKE_CURRENT_LIST_DIR}/${script}.test.js ${PLUMB_BROWSER_ARGS}
                   --demo-pipeline $<TARGET_FILE:demo-pipeline>)
  set_tests_properties(browser_${script} PROPERTIES TIMEOUT 600 LABELS browser
                       ENVIRONMENT "PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1")
endforeach()
# The 10,000-case page is big: do not run it beside the other browser tests on two cores.
set_tests_properties(browser_report_large PROPERTIES RUN_SERIAL TRUE)
