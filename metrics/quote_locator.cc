#include "metrics/quote_locator.h"

#include <unicode/uchar.h>
#include <unicode/utf8.h>

#include <optional>

namespace plumb::metrics {
namespace {

// The ASCII code points with the Unicode White_Space property (PropList.txt): U+0009..U+000D
// and U+0020. u_isUWhiteSpace agrees; testing them inline skips a call per ASCII byte.
bool IsAsciiWhiteSpace(uint8_t c) { return c == ' ' || (c >= 0x09 && c <= 0x0D); }

// The end of the run of White_Space code points that starts at byte `pos` (`pos` if none).
int64_t SkipWhiteSpace(const uint8_t* s, int64_t n, int64_t pos) {
  while (pos < n) {
    if (s[pos] < 0x80) {
      if (!IsAsciiWhiteSpace(s[pos])) break;
      ++pos;
      continue;
    }
    int64_t next = pos;
    UChar32 c = 0;
    U8_NEXT(s, next, n, c);
    if (c < 0 || !u_isUWhiteSpace(c)) break;
    pos = next;
  }
  return pos;
}

// `quote` with every whitespace run replaced by one ASCII space and the ends trimmed.
std::string CollapseQuote(std::string_view quote) {
  const auto* s = reinterpret_cast<const uint8_t*>(quote.data());
  const auto n = static_cast<int64_t>(quote.size());
  std::string out;
  out.reserve(quote.size());
  int64_t pos = SkipWhiteSpace(s, n, 0);
  while (pos < n) {
    const int64_t run_end = SkipWhiteSpace(s, n, pos);
    if (run_end > pos) {
      if (run_end == n) break;  // trailing whitespace is trimmed
      out.push_back(' ');
      pos = run_end;
      continue;
    }
    int64_t next = pos;
    UChar32 c = 0;
    U8_NEXT(s, next, n, c);
    out.append(quote.data() + pos, static_cast<size_t>(next - pos));
    pos = next;
  }
  return out;
}

// If the collapsed quote matches the text at byte `pos`, the byte where the match ends, else -1.
// Each space of the collapsed quote takes a whole non-empty whitespace run of the text; every
// other byte must be equal.
int64_t MatchCollapsed(const uint8_t* s, int64_t n, int64_t pos, const std::string& quote) {
  for (const char q : quote) {
    if (q == ' ') {
      const int64_t run_end = SkipWhiteSpace(s, n, pos);
      if (run_end == pos) return -1;
      pos = run_end;
    } else {
      if (pos >= n || s[pos] != static_cast<uint8_t>(q)) return -1;
      ++pos;
    }
  }
  return pos;
}

// The caller's index, or one built from the text the first time a match needs it.
class LazyIndex {
 public:
  LazyIndex(const std::string& text, const CodePointIndex* given) : text_(text), given_(given) {}
  const CodePointIndex& get() {
    if (given_ != nullptr) return *given_;
    if (!built_) built_.emplace(text_);
    return *built_;
  }

 private:
  const std::string& text_;
  const CodePointIndex* given_;
  std::optional<CodePointIndex> built_;
};

bool Locate(const std::string& text, LazyIndex& index, std::string_view quote, int64_t* start_cp,
            int64_t* end_cp) {
  const std::string collapsed = CollapseQuote(quote);
  if (collapsed.empty()) return false;

  int64_t start = 0;
  int64_t end = 0;
  const auto accept = [&](size_t from, int64_t to) {
    if (!index.get().CodePointOfByte(static_cast<int64_t>(from), &start) ||
        !index.get().CodePointOfByte(to, &end)) {
      return false;  // inside a UTF-8 sequence: not a match of code points
    }
    *start_cp = start;
    *end_cp = end;
    return true;
  };

  for (size_t at = text.find(quote); at != std::string::npos; at = text.find(quote, at + 1)) {
    if (accept(at, static_cast<int64_t>(at + quote.size()))) return true;
  }

  // Whitespace-collapsed: every match begins with the collapsed quote's first word as it is, so
  // a byte search for that word proposes the candidates and MatchCollapsed checks the rest. No
  // collapsed copy of the text is made.
  const std::string first_word = collapsed.substr(0, collapsed.find(' '));
  const auto* s = reinterpret_cast<const uint8_t*>(text.data());
  const auto n = static_cast<int64_t>(text.size());
  for (size_t at = text.find(first_word); at != std::string::npos;
       at = text.find(first_word, at + 1)) {
    const int64_t match_end = MatchCollapsed(s, n, static_cast<int64_t>(at), collapsed);
    if (match_end >= 0 && accept(at, match_end)) return true;
  }
  return false;
}

}  // namespace

bool LocateQuote(const std::string& text, std::string_view quote, int64_t* start_cp,
                 int64_t* end_cp) {
  LazyIndex index(text, nullptr);
  return Locate(text, index, quote, start_cp, end_cp);
}

bool LocateQuote(const std::string& text, const CodePointIndex& index, std::string_view quote,
                 int64_t* start_cp, int64_t* end_cp) {
  LazyIndex lazy(text, &index);
  return Locate(text, lazy, quote, start_cp, end_cp);
}

}  // namespace plumb::metrics
