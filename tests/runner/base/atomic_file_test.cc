// AtomicFile's contract (runner/base/atomic_file.h): a reader sees the old file or the whole new
// one, and nothing is left behind when the new one is abandoned or cannot be written.

#include "runner/base/atomic_file.h"

#include <catch2/catch.hpp>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace plumb {
namespace {

namespace fs = std::filesystem;

std::string Read(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string NewDir() {
  char templ[] = "/tmp/plumb-atomic-test-XXXXXX";
  REQUIRE(mkdtemp(templ) != nullptr);
  return templ;
}

size_t Entries(const std::string& dir) {
  size_t n = 0;
  for (const auto& entry : fs::directory_iterator(dir)) n += entry.is_regular_file() ? 1 : 0;
  return n;
}

TEST_CASE("an atomic file replaces the old one only when committed, and whole") {
  const std::string dir = NewDir();
  const std::string path = dir + "/run.json";
  std::ofstream(path) << "old";
  {
    std::string error;
    std::unique_ptr<AtomicFile> file = AtomicFile::Open(path, &error);
    REQUIRE(file != nullptr);
    CHECK(file->Write("new "));
    CHECK(file->Write("text"));
    CHECK(Read(path) == "old");  // pieces go to the temporary file until the commit
    CHECK(Entries(dir) == 2);
    REQUIRE(file->Commit(&error));
  }
  CHECK(Read(path) == "new text");
  CHECK(Entries(dir) == 1);  // the temporary file was renamed, not copied
  {
    std::string error;
    std::unique_ptr<AtomicFile> abandoned = AtomicFile::Open(path, &error);
    REQUIRE(abandoned != nullptr);
    abandoned->Write("half");
  }  // destroyed without a commit
  CHECK(Read(path) == "new text");
  CHECK(Entries(dir) == 1);
  fs::remove_all(dir);
}

TEST_CASE("an atomic file that cannot be created says where") {
  std::string error;
  CHECK(AtomicFile::Open("/nonexistent-dir/run.json", &error) == nullptr);
  CHECK(error.find("cannot write /nonexistent-dir/run.json.tmp.") == 0);
  CHECK(error.find("No such file or directory") != std::string::npos);
}

}  // namespace
}  // namespace plumb
