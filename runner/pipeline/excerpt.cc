#include "runner/pipeline/excerpt.h"

#include <algorithm>
#include <utility>

namespace plumb {
namespace {

constexpr std::string_view kMask = "***";

bool IsContinuationByte(char c) { return (static_cast<unsigned char>(c) & 0xC0) == 0x80; }

using Interval = std::pair<size_t, size_t>;  // half-open byte range [first, second)

// Every occurrence of every secret that overlaps text[begin, end), found in the whole `text` so
// that one cut off by either edge of the range still counts, merged where they overlap.
std::vector<Interval> SecretIntervals(std::string_view text, size_t begin, size_t end,
                                      const std::vector<std::string>& secrets) {
  std::vector<Interval> found;
  for (const std::string& secret : secrets) {
    const size_t length = secret.size();
    if (length == 0 || length > text.size()) continue;
    const size_t from = begin >= length - 1 ? begin - (length - 1) : 0;
    const size_t to = std::min(text.size(), end + length - 1);
    if (to <= from) continue;
    const std::string_view window = text.substr(from, to - from);
    for (size_t at = window.find(secret); at != std::string_view::npos;
         at = window.find(secret, at + 1)) {
      found.emplace_back(from + at, from + at + length);
    }
  }
  std::sort(found.begin(), found.end());
  std::vector<Interval> merged;
  for (const Interval& interval : found) {
    if (!merged.empty() && interval.first < merged.back().second) {
      merged.back().second = std::max(merged.back().second, interval.second);
    } else {
      merged.push_back(interval);
    }
  }
  return merged;
}

// text[begin, end) with every secret interval (clipped to the range) replaced by the mask.
std::string RedactRange(std::string_view text, size_t begin, size_t end,
                        const std::vector<Interval>& intervals) {
  std::string out;
  out.reserve(end - begin);
  size_t cursor = begin;
  for (const Interval& interval : intervals) {
    const size_t first = std::max(interval.first, begin);
    const size_t last = std::min(interval.second, end);
    if (last <= first) continue;
    out.append(text.substr(cursor, first - cursor));
    out.append(kMask);
    cursor = last;
  }
  out.append(text.substr(cursor, end - cursor));
  return out;
}

}  // namespace

std::string RedactSecrets(std::string text, const std::vector<std::string>& secrets) {
  const std::vector<Interval> intervals = SecretIntervals(text, 0, text.size(), secrets);
  if (intervals.empty()) return text;
  return RedactRange(text, 0, text.size(), intervals);
}

std::string_view Utf8Prefix(std::string_view text, size_t max_bytes) {
  if (text.size() <= max_bytes) return text;
  // text[cut] is the first byte left out; backing up to a lead byte keeps its sequence whole
  // on the far side of the cut. A UTF-8 sequence has at most three continuation bytes.
  size_t cut = max_bytes;
  for (int step = 0; step < 3 && cut > 0 && IsContinuationByte(text[cut]); ++step) --cut;
  if (IsContinuationByte(text[cut])) cut = max_bytes;  // not UTF-8: cut at the byte limit
  return text.substr(0, cut);
}

std::string_view Utf8Suffix(std::string_view text, size_t max_bytes) {
  if (text.size() <= max_bytes) return text;
  const size_t limit = text.size() - max_bytes;
  size_t start = limit;
  for (int step = 0; step < 3 && start < text.size() && IsContinuationByte(text[start]); ++step) {
    ++start;
  }
  if (start < text.size() && IsContinuationByte(text[start])) start = limit;
  return text.substr(start);
}

std::string HeadExcerpt(std::string_view text, size_t max_bytes,
                        const std::vector<std::string>& secrets) {
  const size_t end = Utf8Prefix(text, max_bytes).size();
  std::string out = RedactRange(text, 0, end, SecretIntervals(text, 0, end, secrets));
  // A mask can be longer than the secret it hides, so the redacted text may have grown.
  if (out.size() > max_bytes) out.resize(Utf8Prefix(out, max_bytes).size());
  return out;
}

std::string TailExcerpt(std::string_view text, size_t max_bytes,
                        const std::vector<std::string>& secrets) {
  const size_t begin = text.size() - Utf8Suffix(text, max_bytes).size();
  std::string out =
      RedactRange(text, begin, text.size(), SecretIntervals(text, begin, text.size(), secrets));
  if (out.size() > max_bytes) out.erase(0, out.size() - Utf8Suffix(out, max_bytes).size());
  return out;
}

}  // namespace plumb
