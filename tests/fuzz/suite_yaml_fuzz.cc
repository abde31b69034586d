// Fuzz target: a whole suite file (SPEC §4), loaded as `plumb check` loads it, from a file in a
// directory of its own (so includes and the corpus resolve against it). The loader must finish
// on any bytes, never crash or throw, and either load the suite or report at least one problem,
// each naming the file it is in and saying what is wrong.
#include <stdlib.h>
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include "runner/suite/diagnostic.h"
#include "runner/suite/suite.h"
#include "runner/suite/suite_loader.h"
#include "tests/fuzz/fuzz_check.h"

namespace {

const std::string& SuitePath() {
  static const std::string path = [] {
    char dir[] = "/tmp/plumb_suite_fuzz_XXXXXX";
    FUZZ_CHECK(mkdtemp(dir) != nullptr, "cannot make a directory for the suite file");
    static const std::string removed_at_exit = dir;
    std::atexit([] { std::filesystem::remove_all(removed_at_exit); });
    return std::string(dir) + "/suite.yaml";
  }();
  return path;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string& path = SuitePath();
  {
    std::ofstream out(path, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  }
  plumb::LoadOptions options;
  options.expand_env = false;
  plumb::Suite suite;
  plumb::Diagnostics errors, warnings;
  if (!plumb::LoadSuite(path, options, &suite, &errors, &warnings)) {
    FUZZ_CHECK(!errors.empty(), "a suite that did not load must come with a problem");
    for (const plumb::Diagnostic& e : errors) {
      FUZZ_CHECK(!e.message.empty(), "every problem must say what is wrong");
      FUZZ_CHECK(!e.pos.file.empty(), "every problem must name its file");
    }
  }
  return 0;
}
