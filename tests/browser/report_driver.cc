// html-report-driver: writes the HTML report of a run directory, or the drift page of two run
// directories from a drift JSON file, through the same functions `--html` uses. The browser
// tests use it to get pages to open without depending on which commands offer --html yet.
//
//   html-report-driver run RUN_DIR OUT.html
//   html-report-driver drift DRIFT.json BASE_DIR CAND_DIR OUT.html

#include <chrono>
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>

#include "runner/report/html_report.h"
#include "runner/run/run_reader.h"

namespace {

int Fail(const std::string& message) {
  std::fprintf(stderr, "html-report-driver: %s\n", message.c_str());
  return 2;
}

}  // namespace

int main(int argc, char** argv) {
  const std::string mode = argc > 1 ? argv[1] : "";
  std::string error;
  const auto start = std::chrono::steady_clock::now();
  if (mode == "run" && argc == 4) {
    plumb::LoadedRun run;
    if (!plumb::LoadRun(argv[2], &run, &error)) return Fail(error);
    if (!plumb::WriteHtmlRunReport(run, argv[3], &error)) return Fail(error);
  } else if (mode == "drift" && argc == 6) {
    std::ifstream in(argv[2]);
    std::stringstream text;
    text << in.rdbuf();
    const nlohmann::json drift = nlohmann::json::parse(text.str(), nullptr, false);
    if (drift.is_discarded()) return Fail(std::string(argv[2]) + " is not JSON");
    plumb::LoadedRun base, cand;
    if (!plumb::LoadRun(argv[3], &base, &error)) return Fail(error);
    if (!plumb::LoadRun(argv[4], &cand, &error)) return Fail(error);
    if (!plumb::WriteHtmlDriftReport(drift, base, cand, argv[5], &error)) return Fail(error);
  } else {
    return Fail("usage: html-report-driver run RUN_DIR OUT.html | drift DRIFT.json BASE CAND OUT");
  }
  const double ms =
      std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - start).count();
  std::fprintf(stderr, "html-report-driver: wrote %s in %.0f ms\n", argv[argc - 1], ms);
  return 0;
}
