#ifndef PLUMB_RUNNER_BASE_HUMAN_UNITS_H_
#define PLUMB_RUNNER_BASE_HUMAN_UNITS_H_

/// Durations and sizes written the way a user writes them in a suite ("30s", "300ms", "16 MiB"),
/// for the case errors the adapters report ("timed out after 30s").

#include <chrono>
#include <cstddef>
#include <string>

namespace plumb {

/// "30s", "300ms", "1.5s".
std::string FormatDuration(std::chrono::milliseconds duration);

/// "16 MiB", "64 KiB", "1000 bytes".
std::string FormatBytes(size_t bytes);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_HUMAN_UNITS_H_
