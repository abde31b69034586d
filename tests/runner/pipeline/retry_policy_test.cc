// Which failures an HTTP pipeline retries and how long it waits (runner/pipeline/retry_policy.h).
// Sources: the retried statuses are those listed in SPEC §5; Retry-After syntax and the three
// HTTP-date forms are RFC 9110 §10.2.3 and §5.6.7 (whose examples are used as written); instants
// are computed with glibc's timegm, not by the code under test; full jitter is the "Full
// Jitter" schedule of exponential backoff, sleep = random_between(0, min(cap, base * 2^n))
// (common practice).

#include "runner/pipeline/retry_policy.h"

#include <time.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <chrono>
#include <vector>

using std::chrono::milliseconds;
using SystemTime = std::chrono::system_clock::time_point;

namespace {

// The UTC instant y-m-d h:mi:s, via glibc's timegm.
SystemTime Utc(int y, int m, int d, int h, int mi, int s) {
  tm parts{};
  parts.tm_year = y - 1900;
  parts.tm_mon = m - 1;
  parts.tm_mday = d;
  parts.tm_hour = h;
  parts.tm_min = mi;
  parts.tm_sec = s;
  return std::chrono::system_clock::from_time_t(timegm(&parts));
}

}  // namespace

TEST_CASE("the statuses of SPEC section 5 are retried and no other") {
  for (int status : {408, 429, 500, 502, 503, 504}) {
    INFO(status);
    CHECK(plumb::IsRetryableStatus(status));
  }
  for (int status : {200, 301, 400, 401, 403, 404, 409, 413, 422, 501, 505}) {
    INFO(status);
    CHECK_FALSE(plumb::IsRetryableStatus(status));
  }
}

TEST_CASE("Retry-After in delay-seconds") {
  const SystemTime now = Utc(2026, 3, 1, 12, 0, 0);
  // RFC 9110 §10.2.3: "Retry-After: 120" means two minutes.
  CHECK(plumb::ParseRetryAfter("120", now) == milliseconds(120000));
  CHECK(plumb::ParseRetryAfter(" 1 ", now) == milliseconds(1000));
  CHECK(plumb::ParseRetryAfter("0", now) == milliseconds(0));
}

TEST_CASE("Retry-After as an HTTP-date, in the three forms of RFC 9110 section 5.6.7") {
  // RFC 9110 §10.2.3's example date, 59 seconds after `now`.
  CHECK(plumb::ParseRetryAfter("Fri, 31 Dec 1999 23:59:59 GMT", Utc(1999, 12, 31, 23, 59, 0)) ==
        milliseconds(59000));
  // §5.6.7 gives one instant in all three forms; 37 s after 08:49:00.
  const SystemTime now = Utc(1994, 11, 6, 8, 49, 0);
  CHECK(plumb::ParseRetryAfter("Sun, 06 Nov 1994 08:49:37 GMT", now) == milliseconds(37000));
  CHECK(plumb::ParseRetryAfter("Sunday, 06-Nov-94 08:49:37 GMT", now) == milliseconds(37000));
  CHECK(plumb::ParseRetryAfter("Sun Nov  6 08:49:37 1994", now) == milliseconds(37000));
}

TEST_CASE("a date in the past means retry now") {
  CHECK(plumb::ParseRetryAfter("Sun, 06 Nov 1994 08:49:37 GMT", Utc(2026, 1, 1, 0, 0, 0)) ==
        milliseconds(0));
}

TEST_CASE("a two-digit year more than 50 years ahead is read as the past century") {
  // RFC 9110 §5.6.7. Seen from the end of 2026: "27" is 2027 (10 s ahead); "70" is 2070, 43
  // years ahead, so it stays 2070; "80" would be 2080, more than 50 years ahead, so it is 1980.
  const SystemTime now = Utc(2026, 12, 31, 23, 59, 50);
  CHECK(plumb::ParseRetryAfter("Friday, 01-Jan-27 00:00:00 GMT", now) == milliseconds(10000));
  CHECK(plumb::ParseRetryAfter("Tuesday, 01-Jan-70 00:00:00 GMT", now) ==
        std::chrono::duration_cast<milliseconds>(Utc(2070, 1, 1, 0, 0, 0) - now));
  CHECK(plumb::ParseRetryAfter("Tuesday, 01-Jan-80 00:00:00 GMT", now) == milliseconds(0));
}

TEST_CASE("values that are neither seconds nor an HTTP-date are ignored") {
  const SystemTime now = Utc(2026, 3, 1, 12, 0, 0);
  for (const char* value : {"", "soon", "-5", "1.5", "Sun, 06 Nov 1994 08:49:37 PST",
                            "Sun, 06 Foo 1994 08:49:37 GMT", "Sun, 06 Nov 1994 25:49:37 GMT"}) {
    INFO(value);
    CHECK_FALSE(plumb::ParseRetryAfter(value, now).has_value());
  }
}

TEST_CASE("full jitter: retry n waits between 0 and min(cap, base * 2^(n-1))") {
  plumb::RetryOptions options;
  options.base = milliseconds(100);
  options.cap = milliseconds(1000);
  plumb::RetryPolicy policy(options);
  const std::vector<int64_t> ceilings = {100, 200, 400, 800, 1000, 1000};
  for (size_t n = 1; n <= ceilings.size(); ++n) {
    INFO("retry " << n);
    int64_t largest = 0;
    for (int draw = 0; draw < 200; ++draw) {
      const int64_t delay = policy.Backoff(static_cast<int>(n)).count();
      CHECK(delay >= 0);
      CHECK(delay <= ceilings[n - 1]);
      largest = std::max(largest, delay);
    }
    // Full jitter spreads over the whole range: 200 uniform draws all in the lower half would
    // happen with probability 2^-200.
    CHECK(largest > ceilings[n - 1] / 2);
  }
}

TEST_CASE("the jitter is seeded: the same seed makes the same choices") {
  plumb::RetryOptions options;
  plumb::RetryPolicy a(options), b(options);
  options.seed += 1;
  plumb::RetryPolicy c(options);
  std::vector<int64_t> from_a, from_b, from_c;
  for (int i = 0; i < 20; ++i) {
    from_a.push_back(a.Backoff(3).count());
    from_b.push_back(b.Backoff(3).count());
    from_c.push_back(c.Backoff(3).count());
  }
  CHECK(from_a == from_b);
  CHECK(from_a != from_c);
}

TEST_CASE("retry decisions: kind of failure, attempts left and Retry-After") {
  plumb::RetryOptions options;
  options.retries = 3;  // four attempts in all
  options.base = milliseconds(100);
  plumb::RetryPolicy policy(options);

  SECTION("a failure of a kind that is not retried (HTTP 400, say) is final") {
    const plumb::RetryDecision d = policy.Decide(1, /*retryable=*/false, std::nullopt);
    CHECK_FALSE(d.retry);
    CHECK(d.note.empty());
  }
  SECTION("a retryable failure backs off while attempts are left") {
    for (int attempt = 1; attempt <= 3; ++attempt) {
      const plumb::RetryDecision d = policy.Decide(attempt, true, std::nullopt);
      CHECK(d.retry);
      CHECK(d.delay <= milliseconds(100 << (attempt - 1)));
    }
    CHECK_FALSE(policy.Decide(4, true, std::nullopt).retry);
  }
  SECTION("Retry-After replaces the backoff") {
    const plumb::RetryDecision d = policy.Decide(1, true, milliseconds(1000));
    CHECK(d.retry);
    CHECK(d.delay == milliseconds(1000));
  }
  SECTION("a Retry-After beyond what plumb waits ends the case with a note") {
    const plumb::RetryDecision d = policy.Decide(1, true, milliseconds(3600 * 1000));
    CHECK_FALSE(d.retry);
    CHECK(d.note == "the server asked to retry after 3600s, longer than plumb waits (60s)");
  }
  SECTION("retries: 0 never retries") {
    options.retries = 0;
    plumb::RetryPolicy none(options);
    CHECK(none.max_attempts() == 1);
    CHECK_FALSE(none.Decide(1, true, std::nullopt).retry);
  }
}
