#include "runner/pipeline/excerpt.h"

#include <algorithm>
#include <utility>

#include "runner/base/code_points.h"

namespace plumb {
namespace {

constexpr std::string_view kMask = "***";

bool IsContinuationByte(char c) { return (static_cast<unsigned char>(c) & 0xC0) == 0x80; }

using Interval = std::pair<size_t, size_t>;  // half-open byte range [first, second)

// How a secret may be written: per code point, its own UTF-8 bytes or any JSON escape of it
// (RFC 8259 §7: the two-character escapes, \uXXXX in either case of hex digits, a surrogate
// pair beyond the BMP). One escape is at most 6 bytes per byte of the secret's UTF-8.
constexpr size_t kMaxEscapedBytesPerByte = 6;

struct SecretForm {
  std::string raw;
  std::vector<char32_t> code_points;  // empty when the secret is not UTF-8: raw bytes only
};

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

// The code unit of a "\uXXXX" at text[at], or -1.
long EscapedUnit(std::string_view text, size_t at) {
  if (at + 6 > text.size() || text[at] != '\\' || text[at + 1] != 'u') return -1;
  long unit = 0;
  for (size_t i = at + 2; i < at + 6; ++i) {
    const int digit = HexValue(text[i]);
    if (digit < 0) return -1;
    unit = unit * 16 + digit;
  }
  return unit;
}

char ShortEscape(char32_t c) {
  switch (c) {
    case '"':
      return '"';
    case '\\':
      return '\\';
    case '/':
      return '/';
    case '\b':
      return 'b';
    case '\f':
      return 'f';
    case '\n':
      return 'n';
    case '\r':
      return 'r';
    case '\t':
      return 't';
    default:
      return 0;
  }
}

// Appends to *ends every offset just past a way of writing `c` that starts at text[at].
void MatchCodePoint(std::string_view text, size_t at, char32_t c, std::vector<size_t>* ends) {
  std::string bytes;
  AppendUtf8(c, &bytes);
  if (text.compare(at, bytes.size(), bytes) == 0) ends->push_back(at + bytes.size());
  if (at >= text.size() || text[at] != '\\') return;
  if (const char escape = ShortEscape(c);
      escape != 0 && at + 1 < text.size() && text[at + 1] == escape) {
    ends->push_back(at + 2);
  }
  if (c < 0x10000) {
    if (EscapedUnit(text, at) == static_cast<long>(c)) ends->push_back(at + 6);
  } else {
    const long high = 0xD800 + static_cast<long>((c - 0x10000) >> 10);
    const long low = 0xDC00 + static_cast<long>((c - 0x10000) & 0x3FF);
    if (EscapedUnit(text, at) == high && EscapedUnit(text, at + 6) == low) {
      ends->push_back(at + 12);
    }
  }
}

// The end of the longest way of writing the whole secret that starts at text[at], or 0. The
// ways are followed together (a set of offsets per code point), so a secret of many
// backslashes cannot make the search exponential.
size_t MatchSecret(std::string_view text, size_t at, const SecretForm& secret) {
  std::vector<size_t> here = {at}, next;
  for (const char32_t c : secret.code_points) {
    next.clear();
    for (const size_t offset : here) MatchCodePoint(text, offset, c, &next);
    if (next.empty()) return 0;
    std::sort(next.begin(), next.end());
    next.erase(std::unique(next.begin(), next.end()), next.end());
    here.swap(next);
  }
  return here.back();
}

std::vector<SecretForm> Forms(const std::vector<std::string>& secrets) {
  std::vector<SecretForm> forms;
  for (const std::string& secret : secrets) {
    if (secret.empty()) continue;
    SecretForm form;
    form.raw = secret;
    for (size_t i = 0; i < secret.size();) {
      char32_t c = 0;
      if (!DecodeCodePoint(secret, &i, &c)) {
        form.code_points.clear();
        break;
      }
      form.code_points.push_back(c);
    }
    forms.push_back(std::move(form));
  }
  return forms;
}

// Every occurrence of every secret, as itself or JSON-escaped, that overlaps text[begin, end),
// found in the whole `text` so that one cut off by either edge of the range still counts,
// merged where they overlap.
std::vector<Interval> SecretIntervals(std::string_view text, size_t begin, size_t end,
                                      const std::vector<std::string>& secrets) {
  std::vector<Interval> found;
  for (const SecretForm& secret : Forms(secrets)) {
    const size_t length = secret.raw.size();
    const size_t reach = secret.code_points.empty() ? length : kMaxEscapedBytesPerByte * length;
    const size_t from = begin >= reach - 1 ? begin - (reach - 1) : 0;
    const size_t to = std::min(text.size(), end + reach - 1);
    if (to <= from) continue;
    if (secret.code_points.empty()) {
      const std::string_view window = text.substr(from, to - from);
      for (size_t at = window.find(secret.raw); at != std::string_view::npos;
           at = window.find(secret.raw, at + 1)) {
        found.emplace_back(from + at, from + at + length);
      }
      continue;
    }
    const char first = secret.raw[0];
    for (size_t at = from; at < to; ++at) {
      if (text[at] != first && text[at] != '\\') continue;
      const size_t stop = MatchSecret(text, at, secret);
      if (stop != 0) found.emplace_back(at, stop);
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

void RedactJsonStrings(nlohmann::json* value, const std::vector<std::string>& secrets) {
  if (secrets.empty()) return;
  if (value->is_string()) {
    std::string& text = value->get_ref<std::string&>();
    if (!SecretIntervals(text, 0, text.size(), secrets).empty()) {
      text = RedactSecrets(std::move(text), secrets);
    }
  } else if (value->is_array()) {
    for (nlohmann::json& item : *value) RedactJsonStrings(&item, secrets);
  } else if (value->is_object()) {
    bool keys_clean = true;
    for (auto member = value->begin(); member != value->end(); ++member) {
      RedactJsonStrings(&member.value(), secrets);
      keys_clean =
          keys_clean && SecretIntervals(member.key(), 0, member.key().size(), secrets).empty();
    }
    if (keys_clean) return;
    // Keys cannot be changed in place; two keys that redact alike keep the last value.
    nlohmann::json rebuilt = nlohmann::json::object();
    for (auto member = value->begin(); member != value->end(); ++member) {
      rebuilt[RedactSecrets(member.key(), secrets)] = std::move(member.value());
    }
    *value = std::move(rebuilt);
  }
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
