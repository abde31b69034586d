#include "runner/base/human_units.h"

#include <cstdint>
#include <cstdio>

namespace plumb {

std::string FormatDuration(std::chrono::milliseconds duration) {
  const int64_t ms = duration.count();
  if (ms % 1000 == 0) return std::to_string(ms / 1000) + "s";
  if (ms < 1000) return std::to_string(ms) + "ms";
  char text[32];
  std::snprintf(text, sizeof text, "%.3f", static_cast<double>(ms) / 1000.0);
  std::string seconds = text;
  while (seconds.back() == '0') seconds.pop_back();
  return seconds + "s";
}

std::string FormatBytes(size_t bytes) {
  constexpr size_t kKiB = 1024, kMiB = 1024 * 1024;
  if (bytes >= kMiB && bytes % kMiB == 0) return std::to_string(bytes / kMiB) + " MiB";
  if (bytes >= kKiB && bytes % kKiB == 0) return std::to_string(bytes / kKiB) + " KiB";
  return std::to_string(bytes) + " bytes";
}

}  // namespace plumb
