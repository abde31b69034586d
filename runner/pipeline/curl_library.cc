#include "runner/pipeline/curl_library.h"

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
bool Resolve(void* handle, const char* soname, const char* name, Function* out,
             std::string* error) {
  void* symbol = dlsym(handle, name);
  if (symbol == nullptr) {
    *error = std::string(soname) + " has no " + name + "; install a libcurl of 7.68 or later";
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
  if (!OpenCurlLibrary(kLibrary, &state.library, &state.error)) return;
  const CURLcode init = state.library.global_init(CURL_GLOBAL_DEFAULT);
  if (init != CURLE_OK) {
    state.error = std::string("libcurl could not start: ") + state.library.easy_strerror(init);
    return;
  }
  state.ok = true;
}

}  // namespace

bool OpenCurlLibrary(const char* soname, CurlLibrary* out, std::string* error) {
  // Kept loaded for the life of the process: transfers may run until exit.
  void* handle = dlopen(soname, RTLD_NOW | RTLD_LOCAL);
  if (handle == nullptr) {
    const char* reason = dlerror();
    *error = std::string("cannot load ") + soname + " (" +
             (reason != nullptr ? reason : "unknown reason") +
             "), which HTTP pipelines need; install it (Debian: apt-get install libcurl4)";
    return false;
  }
  CurlLibrary& c = *out;
  const char* n = soname;
  return Resolve(handle, n, "curl_global_init", &c.global_init, error) &&
         Resolve(handle, n, "curl_version_info", &c.version_info, error) &&
         Resolve(handle, n, "curl_easy_init", &c.easy_init, error) &&
         Resolve(handle, n, "curl_easy_cleanup", &c.easy_cleanup, error) &&
         Resolve(handle, n, "curl_easy_setopt", &c.easy_setopt, error) &&
         Resolve(handle, n, "curl_easy_getinfo", &c.easy_getinfo, error) &&
         Resolve(handle, n, "curl_easy_strerror", &c.easy_strerror, error) &&
         Resolve(handle, n, "curl_easy_perform", &c.easy_perform, error) &&
         Resolve(handle, n, "curl_multi_init", &c.multi_init, error) &&
         Resolve(handle, n, "curl_multi_cleanup", &c.multi_cleanup, error) &&
         Resolve(handle, n, "curl_multi_setopt", &c.multi_setopt, error) &&
         Resolve(handle, n, "curl_multi_add_handle", &c.multi_add_handle, error) &&
         Resolve(handle, n, "curl_multi_remove_handle", &c.multi_remove_handle, error) &&
         Resolve(handle, n, "curl_multi_perform", &c.multi_perform, error) &&
         Resolve(handle, n, "curl_multi_poll", &c.multi_poll, error) &&
         Resolve(handle, n, "curl_multi_wakeup", &c.multi_wakeup, error) &&
         Resolve(handle, n, "curl_multi_info_read", &c.multi_info_read, error) &&
         Resolve(handle, n, "curl_multi_strerror", &c.multi_strerror, error) &&
         Resolve(handle, n, "curl_slist_append", &c.slist_append, error) &&
         Resolve(handle, n, "curl_slist_free_all", &c.slist_free_all, error);
}

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
