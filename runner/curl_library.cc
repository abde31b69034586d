#include "runner/curl_library.h"

#include <dlfcn.h>

#include <cassert>
#include <mutex>

namespace plumb {
namespace {

// The SONAME of libcurl's ABI, unchanged since libcurl 7.16 (2006); Debian's libcurl4 package.
constexpr char kLibrary[] = "libcurl.so.4";

struct Loaded {
  CurlLibrary library{};
  bool ok = false;
  std::string error;
};

template <typename Function>
bool Resolve(void* handle, const char* name, Function* out, std::string* error) {
  void* symbol = dlsym(handle, name);
  if (symbol == nullptr) {
    *error = std::string(kLibrary) + " has no " + name + "; install a libcurl of 7.68 or later";
    return false;
  }
  *out = reinterpret_cast<Function>(symbol);
  return true;
}

Loaded& State() {
  static Loaded loaded;
  return loaded;
}

void Load() {
  Loaded& state = State();
  // Kept loaded for the life of the process: transfers may run until exit.
  void* handle = dlopen(kLibrary, RTLD_NOW | RTLD_LOCAL);
  if (handle == nullptr) {
    const char* reason = dlerror();
    state.error = std::string("cannot load ") + kLibrary + " (" +
                  (reason != nullptr ? reason : "unknown reason") +
                  "), which HTTP pipelines need; install it (Debian: apt-get install libcurl4)";
    return;
  }
  CurlLibrary& c = state.library;
  std::string& e = state.error;
  const bool resolved = Resolve(handle, "curl_global_init", &c.global_init, &e) &&
                        Resolve(handle, "curl_version_info", &c.version_info, &e) &&
                        Resolve(handle, "curl_easy_init", &c.easy_init, &e) &&
                        Resolve(handle, "curl_easy_cleanup", &c.easy_cleanup, &e) &&
                        Resolve(handle, "curl_easy_setopt", &c.easy_setopt, &e) &&
                        Resolve(handle, "curl_easy_getinfo", &c.easy_getinfo, &e) &&
                        Resolve(handle, "curl_easy_strerror", &c.easy_strerror, &e) &&
                        Resolve(handle, "curl_multi_init", &c.multi_init, &e) &&
                        Resolve(handle, "curl_multi_cleanup", &c.multi_cleanup, &e) &&
                        Resolve(handle, "curl_multi_setopt", &c.multi_setopt, &e) &&
                        Resolve(handle, "curl_multi_add_handle", &c.multi_add_handle, &e) &&
                        Resolve(handle, "curl_multi_remove_handle", &c.multi_remove_handle, &e) &&
                        Resolve(handle, "curl_multi_perform", &c.multi_perform, &e) &&
                        Resolve(handle, "curl_multi_poll", &c.multi_poll, &e) &&
                        Resolve(handle, "curl_multi_wakeup", &c.multi_wakeup, &e) &&
                        Resolve(handle, "curl_multi_info_read", &c.multi_info_read, &e) &&
                        Resolve(handle, "curl_multi_strerror", &c.multi_strerror, &e) &&
                        Resolve(handle, "curl_slist_append", &c.slist_append, &e) &&
                        Resolve(handle, "curl_slist_free_all", &c.slist_free_all, &e);
  if (!resolved) return;
  const CURLcode init = c.global_init(CURL_GLOBAL_DEFAULT);
  if (init != CURLE_OK) {
    e = std::string("libcurl could not start: ") + c.easy_strerror(init);
    return;
  }
  state.ok = true;
}

}  // namespace

const CurlLibrary* LoadCurlLibrary(std::string* error) {
  static std::once_flag once;
  std::call_once(once, Load);
  const Loaded& state = State();
  if (!state.ok) {
    *error = state.error;
    return nullptr;
  }
  return &state.library;
}

const CurlLibrary& Curl() {
  assert(State().ok);
  return State().library;
}

}  // namespace plumb
