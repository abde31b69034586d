#ifndef PLUMB_RUNNER_PIPELINE_CURL_LIBRARY_H_
#define PLUMB_RUNNER_PIPELINE_CURL_LIBRARY_H_

/// The libcurl entry points the HTTP adapter calls, loaded with dlopen when the first HTTP
/// pipeline is created instead of linked into plumb. Linking libcurl, and the thirty-odd
/// libraries it pulls in (TLS, Kerberos, LDAP, ...), costs every plumb process about 4 ms of
/// dynamic loading at start-up, which is most of a small `plumb score` or `plumb check`; only
/// HTTP pipelines need it. The pointers have the types of the functions in <curl/curl.h>.

#include <curl/curl.h>

#include <string>

namespace plumb {

struct CurlLibrary {
  decltype(&::curl_global_init) global_init;
  decltype(&::curl_version_info) version_info;
  decltype(&::curl_easy_init) easy_init;
  decltype(&::curl_easy_cleanup) easy_cleanup;
  decltype(&::curl_easy_setopt) easy_setopt;
  decltype(&::curl_easy_getinfo) easy_getinfo;
  decltype(&::curl_easy_strerror) easy_strerror;
  decltype(&::curl_easy_perform) easy_perform;  // only for polling a ready_url
  decltype(&::curl_multi_init) multi_init;
  decltype(&::curl_multi_cleanup) multi_cleanup;
  decltype(&::curl_multi_setopt) multi_setopt;
  decltype(&::curl_multi_add_handle) multi_add_handle;
  decltype(&::curl_multi_remove_handle) multi_remove_handle;
  decltype(&::curl_multi_perform) multi_perform;
  decltype(&::curl_multi_poll) multi_poll;
  decltype(&::curl_multi_wakeup) multi_wakeup;
  decltype(&::curl_multi_info_read) multi_info_read;
  decltype(&::curl_multi_strerror) multi_strerror;
  decltype(&::curl_slist_append) slist_append;
  decltype(&::curl_slist_free_all) slist_free_all;
};

/// Opens the shared library `soname` and fills *out with its entry points; false with *error
/// naming the library and what to install. LoadCurlLibrary's first step.
bool OpenCurlLibrary(const char* soname, CurlLibrary* out, std::string* error);

/// Loads libcurl.so.4 and runs curl_global_init, once per process (thread-safe). Returns null
/// with *error saying which library is missing and what to install when it cannot be loaded;
/// later calls give the same answer.
const CurlLibrary* LoadCurlLibrary(std::string* error);

/// The library loaded by a LoadCurlLibrary call that succeeded; only code that runs after one
/// (the HTTP adapter, once created) may call it.
const CurlLibrary& Curl();

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_CURL_LIBRARY_H_
