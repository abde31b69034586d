#include "metrics/number_match.h"

#include <unicode/uchar.h>

#include <algorithm>
#include <cfloat>
#include <charconv>
#include <cmath>
#include <string>
#include <system_error>

#include "metrics/utf8.h"

namespace plumb::metrics {

namespace {

constexpr char32_t kMinusSign = 0x2212;

bool IsDigit(char32_t c) {
  if (c < 0x80) return c >= '0' && c <= '9';
  return u_charType(static_cast<UChar32>(c)) == U_DECIMAL_DIGIT_NUMBER;
}

char DigitChar(char32_t c) {
  if (c < 0x80) return static_cast<char>(c);
  return static_cast<char>('0' + u_charDigitValue(static_cast<UChar32>(c)));
}

bool IsLetter(char32_t c) {
  if (c < 0x80) return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z');
  return u_isalpha(static_cast<UChar32>(c)) != 0;
}

bool IsAlnum(char32_t c) { return IsLetter(c) || IsDigit(c); }

bool IsSign(char32_t c) { return c == '+' || c == '-' || c == kMinusSign; }

bool IsGroupSeparator(char32_t c) {
  return c == ',' || c == ' ' || c == 0x00A0 || c == 0x202F || c == 0x2009;
}

// 0..20 by their English names; twenty-one..twenty-nine are built from the units.
int NumberWordValue(std::string_view lower_word) {
  static constexpr std::string_view kWords[] = {
      "zero",     "one",     "two",     "three",     "four",     "five",     "six",
      "seven",    "eight",   "nine",    "ten",       "eleven",   "twelve",   "thirteen",
      "fourteen", "fifteen", "sixteen", "seventeen", "eighteen", "nineteen", "twenty"};
  for (int v = 0; v <= 20; ++v) {
    if (kWords[v] == lower_word) return v;
  }
  return -1;
}

class NumberScanner {
 public:
  explicit NumberScanner(std::string_view text) : s_(DecodeUtf8(text)) {}

  std::vector<double> Scan() {
    size_t i = 0;
    while (i < s_.size()) {
      const char32_t c = s_[i];
      if (IsDigit(c) || (c == '.' && IsDigitAt(i + 1) && !(i > 0 && IsAlnum(s_[i - 1])))) {
        i = ReadNumber(i);
      } else if (IsLetter(c)) {
        i = ReadWord(i);
      } else {
        ++i;
      }
    }
    return std::move(numbers_);
  }

 private:
  bool IsDigitAt(size_t i) const { return i < s_.size() && IsDigit(s_[i]); }

  size_t ReadDigits(size_t i, std::string* out) const {
    while (IsDigitAt(i)) out->push_back(DigitChar(s_[i++]));
    return i;
  }

  // A separator at `i` followed by exactly three digits (no fourth) continues a grouped number.
  bool GroupAt(size_t i, char32_t separator) const {
    return i < s_.size() && s_[i] == separator && IsDigitAt(i + 1) && IsDigitAt(i + 2) &&
           IsDigitAt(i + 3) && !IsDigitAt(i + 4);
  }

  size_t ReadNumber(size_t start) {
    std::string literal;
    if (start > 0 && IsSign(s_[start - 1]) && (start < 2 || !IsAlnum(s_[start - 2]))) {
      if (s_[start - 1] != '+') literal.push_back('-');
    }
    size_t i = ReadDigits(start, &literal);
    const size_t integer_digits = i - start;
    if (integer_digits >= 1 && integer_digits <= 3 && i < s_.size() && IsGroupSeparator(s_[i]) &&
        GroupAt(i, s_[i])) {
      const char32_t separator = s_[i];
      while (GroupAt(i, separator)) i = ReadDigits(i + 1, &literal);
    }
    if (i < s_.size() && s_[i] == '.' && IsDigitAt(i + 1)) {
      if (integer_digits == 0) literal.push_back('0');
      literal.push_back('.');
      i = ReadDigits(i + 1, &literal);
    }
    double value = 0;
    const char* first = literal.data();
    const char* last = literal.data() + literal.size();
    const std::from_chars_result result = std::from_chars(first, last, value);
    if (result.ec == std::errc() && std::isfinite(value)) numbers_.push_back(value);
    return i;
  }

  size_t ReadWord(size_t start) {
    size_t end = start;
    std::string lower;
    bool ascii = true;
    while (end < s_.size() && IsLetter(s_[end])) {
      const char32_t c = s_[end++];
      if (c >= 0x80) ascii = false;
      if (ascii) lower.push_back(static_cast<char>(c >= 'A' && c <= 'Z' ? c + ('a' - 'A') : c));
    }
    const bool bounded =
        (start == 0 || !IsAlnum(s_[start - 1])) && (end == s_.size() || !IsAlnum(s_[end]));
    const int value = ascii && bounded ? NumberWordValue(lower) : -1;
    if (value < 0) return end;
    if (value == 20 && end + 1 < s_.size() && s_[end] == '-') {
      size_t unit_end = end + 1;
      std::string unit;
      while (unit_end < s_.size() && s_[unit_end] < 0x80 && IsLetter(s_[unit_end])) {
        const char32_t c = s_[unit_end++];
        unit.push_back(static_cast<char>(c >= 'A' && c <= 'Z' ? c + ('a' - 'A') : c));
      }
      const int units = NumberWordValue(unit);
      if (units >= 1 && units <= 9 && (unit_end == s_.size() || !IsAlnum(s_[unit_end]))) {
        numbers_.push_back(20.0 + units);
        return unit_end;
      }
    }
    numbers_.push_back(value);
    return end;
  }

  const std::u32string s_;
  std::vector<double> numbers_;
};

}  // namespace

std::vector<double> ExtractNumbers(std::string_view text) { return NumberScanner(text).Scan(); }

bool NumberMatches(std::string_view answer, double value, double tolerance) {
  if (std::isnan(value) || std::isnan(tolerance)) return false;
  tolerance = std::max(tolerance, 0.0);
  for (double x : ExtractNumbers(answer)) {
    const double scale = std::max({1.0, std::fabs(x), std::fabs(value), tolerance});
    if (std::fabs(x - value) <= tolerance + 8 * DBL_EPSILON * scale) return true;
  }
  return false;
}

}  // namespace plumb::metrics
