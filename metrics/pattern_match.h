#ifndef PLUMB_METRICS_PATTERN_MATCH_H_
#define PLUMB_METRICS_PATTERN_MATCH_H_

/// A case's `patterns` (SPEC §4) compiled once per suite with RE2, for the pattern_match metric
/// of SPEC §6.2: 1 when any pattern finds a match anywhere in the raw (unnormalized) answer.
/// RE2 guarantees linear-time matching, so an untrusted answer cannot make a search blow up.
///
/// Each pattern is compiled as UTF-8 with RE2's default syntax (Perl-like, case-sensitive; use
/// (?i) for case-insensitive) and a memory budget of kPatternMaxMemory bytes. A PatternSet is
/// movable, not copyable; AnyMatch is const and safe to call from several threads at once.

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace re2 {
class RE2;
}

namespace plumb::metrics {

class PatternSet {
 public:
  /// RE2::Options::set_max_mem for each pattern: 8 MiB, enough for any hand-written pattern;
  /// a pattern that needs more fails to compile instead of exhausting memory.
  static constexpr int64_t kPatternMaxMemory = int64_t{8} << 20;

  PatternSet();
  ~PatternSet();
  PatternSet(PatternSet&&) noexcept;
  PatternSet& operator=(PatternSet&&) noexcept;
  PatternSet(const PatternSet&) = delete;
  PatternSet& operator=(const PatternSet&) = delete;

  /// Compiles every pattern into `*out`. On failure returns false, leaves `*out` unchanged and
  /// sets `*error` to a sentence naming the 0-based index of the first failing pattern, the
  /// pattern and RE2's message.
  static bool Compile(const std::vector<std::string>& patterns, PatternSet* out,
                      std::string* error);

  /// True when some pattern matches a substring of `raw_answer` (unanchored search).
  /// False for an empty set.
  bool AnyMatch(std::string_view raw_answer) const;

  size_t size() const { return patterns_.size(); }
  bool empty() const { return patterns_.empty(); }

 private:
  std::vector<std::unique_ptr<re2::RE2>> patterns_;
};

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_PATTERN_MATCH_H_
