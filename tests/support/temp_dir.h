// Test support: a directory under /tmp for one test, removed with everything in it when the
// test ends. Header-only.
#ifndef PLUMB_TESTS_SUPPORT_TEMP_DIR_H_
#define PLUMB_TESTS_SUPPORT_TEMP_DIR_H_

#include <stdlib.h>

#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>
#include <string>

namespace plumb_test {

class TempDir {
 public:
  TempDir() {
    char templ[] = "/tmp/plumb-test-XXXXXX";
    REQUIRE(mkdtemp(templ) != nullptr);
    path_ = templ;
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  const std::string& path() const { return path_; }
  std::string Path(const std::string& relative) const { return path_ + "/" + relative; }
  /// Writes `content` to `relative` (its directories made as needed); returns the full path.
  std::string Write(const std::string& relative, const std::string& content) const {
    const std::filesystem::path file = std::filesystem::path(path_) / relative;
    std::filesystem::create_directories(file.parent_path());
    std::ofstream(file, std::ios::binary) << content;
    return file.string();
  }

 private:
  std::string path_;
};

}  // namespace plumb_test

#endif  // PLUMB_TESTS_SUPPORT_TEMP_DIR_H_
