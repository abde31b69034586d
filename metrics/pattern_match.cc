#include "metrics/pattern_match.h"

#include <re2/re2.h>

namespace plumb::metrics {

PatternSet::PatternSet() = default;
PatternSet::~PatternSet() = default;
PatternSet::PatternSet(PatternSet&&) noexcept = default;
PatternSet& PatternSet::operator=(PatternSet&&) noexcept = default;

bool PatternSet::Compile(const std::vector<std::string>& patterns, PatternSet* out,
                         std::string* error) {
  RE2::Options options;
  options.set_max_mem(kPatternMaxMemory);
  options.set_log_errors(false);  // the error goes back to the caller, not to stderr
  std::vector<std::unique_ptr<RE2>> compiled;
  compiled.reserve(patterns.size());
  for (size_t i = 0; i < patterns.size(); ++i) {
    auto re = std::make_unique<RE2>(patterns[i], options);
    if (!re->ok()) {
      *error = "pattern " + std::to_string(i) + " ('" + patterns[i] +
               "') does not compile: " + re->error();
      return false;
    }
    compiled.push_back(std::move(re));
  }
  out->patterns_ = std::move(compiled);
  return true;
}

bool PatternSet::AnyMatch(std::string_view raw_answer) const {
  const re2::StringPiece text(raw_answer.data(), raw_answer.size());
  for (const std::unique_ptr<RE2>& re : patterns_) {
    if (RE2::PartialMatch(text, *re)) return true;
  }
  return false;
}

}  // namespace plumb::metrics
