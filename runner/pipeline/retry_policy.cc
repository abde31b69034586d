#include "runner/pipeline/retry_policy.h"

#include <algorithm>
#include <cctype>
#include <vector>

namespace plumb {
namespace {

using std::chrono::milliseconds;

std::string_view Trim(std::string_view text) {
  while (!text.empty() && (text.front() == ' ' || text.front() == '\t')) text.remove_prefix(1);
  while (!text.empty() && (text.back() == ' ' || text.back() == '\t')) text.remove_suffix(1);
  return text;
}

bool AllDigits(std::string_view text) {
  return !text.empty() && std::all_of(text.begin(), text.end(), [](char c) {
    return std::isdigit(static_cast<unsigned char>(c));
  });
}

int64_t Digits(std::string_view text) {
  int64_t value = 0;
  for (char c : text) value = value * 10 + (c - '0');
  return value;
}

bool EqualsIgnoringCase(std::string_view a, std::string_view b) {
  return a.size() == b.size() && std::equal(a.begin(), a.end(), b.begin(), [](char x, char y) {
           return std::tolower(static_cast<unsigned char>(x)) ==
                  std::tolower(static_cast<unsigned char>(y));
         });
}

bool IsDayName(std::string_view token) {
  static const char* const kDays[] = {"Mon",      "Tue",    "Wed",      "Thu",     "Fri",
                                      "Sat",      "Sun",    "Monday",   "Tuesday", "Wednesday",
                                      "Thursday", "Friday", "Saturday", "Sunday"};
  for (const char* day : kDays) {
    if (EqualsIgnoringCase(token, day)) return true;
  }
  return false;
}

// 1-12, or 0 when `token` is not a month's three-letter name.
int MonthNumber(std::string_view token) {
  static const char* const kMonths[] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                                        "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};
  for (int i = 0; i < 12; ++i) {
    if (EqualsIgnoringCase(token, kMonths[i])) return i + 1;
  }
  return 0;
}

bool ParseTimeOfDay(std::string_view token, int64_t* seconds) {
  if (token.size() != 8 || token[2] != ':' || token[5] != ':') return false;
  const std::string_view h = token.substr(0, 2), m = token.substr(3, 2), s = token.substr(6, 2);
  if (!AllDigits(h) || !AllDigits(m) || !AllDigits(s)) return false;
  if (Digits(h) > 23 || Digits(m) > 59 || Digits(s) > 60) return false;  // 60: a leap second
  *seconds = Digits(h) * 3600 + Digits(m) * 60 + Digits(s);
  return true;
}

// Days from 1970-01-01 to y-m-d in the proleptic Gregorian calendar (H. Hinnant's
// days_from_civil, "chrono-Compatible Low-Level Date Algorithms").
int64_t DaysFromCivil(int64_t y, int64_t m, int64_t d) {
  y -= m <= 2;
  const int64_t era = (y >= 0 ? y : y - 399) / 400;
  const int64_t yoe = y - era * 400;
  const int64_t doy = (153 * (m > 2 ? m - 3 : m + 9) + 2) / 5 + d - 1;
  const int64_t doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + doe - 719468;
}

int64_t CurrentYear(std::chrono::system_clock::time_point now) {
  const int64_t days =
      std::chrono::duration_cast<std::chrono::hours>(now.time_since_epoch()).count() / 24;
  // Inverse of DaysFromCivil, year only.
  const int64_t z = days + 719468;
  const int64_t era = (z >= 0 ? z : z - 146096) / 146097;
  const int64_t doe = z - era * 146097;
  const int64_t yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
  const int64_t doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
  const int64_t mp = (5 * doy + 2) / 153;
  return yoe + era * 400 + (mp >= 10 ? 1 : 0);
}

// Seconds since the epoch of an HTTP-date, or false.
bool ParseHttpDate(std::string_view text, std::chrono::system_clock::time_point now,
                   int64_t* epoch_seconds) {
  std::vector<std::string_view> tokens;
  size_t at = 0;
  auto separator = [](char c) { return c == ' ' || c == ',' || c == '-'; };
  while (at < text.size()) {
    while (at < text.size() && separator(text[at])) ++at;
    size_t end = at;
    while (end < text.size() && !separator(text[end])) ++end;
    if (end > at) tokens.push_back(text.substr(at, end - at));
    at = end;
  }
  std::string_view day, month, year, time;
  if (tokens.size() == 6 && EqualsIgnoringCase(tokens[5], "GMT")) {
    // IMF-fixdate "Sun, 06 Nov 1994 08:49:37 GMT" or RFC 850 "Sunday, 06-Nov-94 08:49:37 GMT".
    day = tokens[1], month = tokens[2], year = tokens[3], time = tokens[4];
  } else if (tokens.size() == 5) {
    // asctime "Sun Nov  6 08:49:37 1994".
    month = tokens[1], day = tokens[2], year = tokens[4], time = tokens[3];
  } else {
    return false;
  }
  const int month_number = MonthNumber(month);
  int64_t seconds_of_day = 0;
  if (!IsDayName(tokens[0]) || month_number == 0 || !AllDigits(day) || day.size() > 2 ||
      !AllDigits(year) || (year.size() != 2 && year.size() != 4) ||
      !ParseTimeOfDay(time, &seconds_of_day)) {
    return false;
  }
  int64_t y = Digits(year);
  if (year.size() == 2) {
    // RFC 9110 §5.6.7: a two-digit year more than 50 years in the future is the most recent
    // past year with those digits.
    const int64_t current = CurrentYear(now);
    y += current - current % 100;
    if (y > current + 50) y -= 100;
  }
  const int64_t d = Digits(day);
  if (d < 1 || d > 31) return false;
  *epoch_seconds = DaysFromCivil(y, month_number, d) * 86400 + seconds_of_day;
  return true;
}

}  // namespace

bool IsRetryableStatus(int status) {
  switch (status) {
    case 408:
    case 429:
    case 500:
    case 502:
    case 503:
    case 504:
      return true;
    default:
      return false;
  }
}

std::optional<milliseconds> ParseRetryAfter(std::string_view value,
                                            std::chrono::system_clock::time_point now) {
  value = Trim(value);
  if (AllDigits(value)) {
    // Anything beyond a year is "much too long" all the same; the cap keeps the arithmetic safe.
    constexpr int64_t kYearSeconds = 366LL * 86400;
    const int64_t seconds = value.size() > 9 ? kYearSeconds : std::min(Digits(value), kYearSeconds);
    return milliseconds(seconds * 1000);
  }
  int64_t epoch_seconds = 0;
  if (!ParseHttpDate(value, now, &epoch_seconds)) return std::nullopt;
  const auto date = std::chrono::system_clock::time_point(std::chrono::seconds(epoch_seconds));
  if (date <= now) return milliseconds(0);
  return std::chrono::ceil<milliseconds>(date - now);
}

RetryPolicy::RetryPolicy(const RetryOptions& options)
    : options_(options), generator_(options.seed) {}

std::chrono::milliseconds RetryPolicy::Backoff(int retry) {
  const int64_t base = std::max<int64_t>(0, options_.base.count());
  const int64_t cap = std::max<int64_t>(0, options_.cap.count());
  int64_t ceiling = base;
  for (int i = 1; i < retry && ceiling < cap; ++i) ceiling *= 2;
  ceiling = std::min(ceiling, cap);
  std::lock_guard<std::mutex> lock(mutex_);
  // Modulo of a 64-bit draw: the bias is below 2^-40 for any delay in milliseconds, and unlike
  // std::uniform_int_distribution the sequence is the same with every standard library.
  return milliseconds(static_cast<int64_t>(generator_() % static_cast<uint64_t>(ceiling + 1)));
}

RetryDecision RetryPolicy::Decide(int attempt, bool retryable,
                                  std::optional<milliseconds> retry_after) {
  RetryDecision decision;
  if (!retryable || attempt >= max_attempts()) return decision;
  if (retry_after.has_value()) {
    if (*retry_after > options_.max_retry_after) {
      decision.note = "the server asked to retry after " +
                      std::to_string((retry_after->count() + 999) / 1000) +
                      "s, longer than plumb waits (" +
                      std::to_string(options_.max_retry_after.count() / 1000) + "s)";
      return decision;
    }
    decision.retry = true;
    decision.delay = *retry_after;
    return decision;
  }
  decision.retry = true;
  decision.delay = Backoff(attempt);
  return decision;
}

}  // namespace plumb
