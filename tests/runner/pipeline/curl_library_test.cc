// libcurl is loaded at run time (runner/pipeline/curl_library.h): Debian's libcurl4 must give every
// entry point the HTTP adapter calls, and a missing library must be named with what to install.

#include "runner/pipeline/curl_library.h"

#include <catch2/catch.hpp>
#include <string>

namespace plumb {
namespace {

TEST_CASE("libcurl.so.4 is loaded with every entry point the HTTP adapter calls") {
  std::string error;
  const CurlLibrary* curl = LoadCurlLibrary(&error);
  INFO(error);
  REQUIRE(curl != nullptr);
  CHECK(curl->slist_free_all != nullptr);
  // A call through the loaded library: its version, at least the 7.68 the loader asks for.
  const curl_version_info_data* info = curl->version_info(CURLVERSION_NOW);
  REQUIRE(info != nullptr);
  CHECK(info->version_num >= 0x074400);
  CHECK(&Curl() == curl);
}

TEST_CASE("a library that is not there is named, with the package to install") {
  CurlLibrary library{};
  std::string error;
  CHECK_FALSE(OpenCurlLibrary("libcurl-not-installed.so.4", &library, &error));
  CHECK(error.find("cannot load libcurl-not-installed.so.4 (") == 0);
  CHECK(error.find("which HTTP pipelines need; install it (Debian: apt-get install libcurl4)") !=
        std::string::npos);
}

}  // namespace
}  // namespace plumb
