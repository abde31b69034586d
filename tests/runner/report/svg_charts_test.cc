// The report's SVG charts as text (issue 20 item 2): the latency chart's log axis, percentiles
// with timeouts as lower bounds, and its step line; the per-tag delta chart's scale, zero line,
// min-effect band and rows. Percentiles worked by hand with definition 7 (Hyndman and Fan) on
// [10, 20, 30, 40, 1000]: p50 at h = 2 is 30; p90 at h = 3.6 is 40 + 0.6 * 960 = 616; p95 at
// h = 3.8 is 808; p99 at h = 3.96 is 961.6, each weighting the lower bound 1000, so "at least".

#include <catch2/catch.hpp>
#include <string>

#include "runner/report/svg_delta_chart.h"
#include "runner/report/svg_latency_chart.h"

namespace {

size_t Count(const std::string& haystack, const std::string& needle) {
  size_t n = 0;
  for (size_t at = haystack.find(needle); at != std::string::npos;
       at = haystack.find(needle, at + 1)) {
    ++n;
  }
  return n;
}

}  // namespace

TEST_CASE("svg charts: latency on a log axis, a timeout as a lower bound", "[svg_charts]") {
  std::string out;
  plumb::AppendLatencyChart(&out, "lc", {{"run <1>", {10, 20, 30, 40}, {1000}}});
  // Decades 10 ms .. 1 s, labelled; both axis titles; title and desc named by aria.
  CHECK(out.find(">10 ms</text>") != std::string::npos);
  CHECK(out.find(">100 ms</text>") != std::string::npos);
  CHECK(out.find(">1 s</text>") != std::string::npos);
  CHECK(Count(out, "class=\"xl\"") == 3);
  CHECK(out.find(">latency of a reply (logarithmic scale)</text>") != std::string::npos);
  CHECK(out.find(">replies at or below</text>") != std::string::npos);
  CHECK(out.find("aria-labelledby=\"lc-t lc-d\"") != std::string::npos);
  const std::string words =
      "run &lt;1&gt;: 5 replies, p50 30 ms, p90 at least 616 ms, p95 at least 808 ms, p99 at "
      "least 962 ms, max at least 1000 ms; 1 timed out, drawn at their timeout (a lower bound)";
  CHECK(out.find("<desc id=\"lc-d\">" + words + ".</desc>") != std::string::npos);
  CHECK(out.find("run &lt;1&gt; (solid): ") != std::string::npos);
  // One step per value: x of 10 ms is the plot's left edge (64), the line rises to 100% (y 12).
  const size_t path = out.find("<path class=\"cdf s0\" d=\"M64.0 228.0V");
  REQUIRE(path != std::string::npos);
  const std::string d = out.substr(path, out.find("\"/>", path) - path);
  CHECK(Count(d, "V") == 5);
  CHECK(d.size() > 5);
  CHECK(d.substr(d.size() - 5) == "V12.0");

  out.clear();
  plumb::AppendLatencyChart(&out, "none", {{"quiet", {}, {}}});
  CHECK(out ==
        "<figure class=\"chart\"><p class=\"note\">No latency recorded for quiet.</p>"
        "</figure>");
}

TEST_CASE("svg charts: per-tag deltas with zero line and min-effect band", "[svg_charts]") {
  std::string out;
  plumb::AppendDeltaChart(&out, "dc", "correct",
                          {{"all cases", -0.1, -0.2, -0.02, "regressed"},
                           {"<b>", 0.01, -0.05, 0.07, "steady"},
                           {"empty", std::nullopt, std::nullopt, std::nullopt, ""}},
                          0.005);
  // Reach 0.2 (the widest interval end): the scale is -0.2 .. +0.2 with five ticks.
  for (const char* tick : {">\xE2\x88\x92"
                           "0.2<",
                           ">\xE2\x88\x92"
                           "0.1<",
                           ">0<", ">+0.1<", ">+0.2<"}) {
    CHECK(out.find(tick) != std::string::npos);
  }
  CHECK(Count(out, "class=\"xl\"") == 5);
  CHECK(Count(out, "<rect class=\"band\"") == 1);
  CHECK(Count(out, "<line class=\"zero\"") == 1);
  CHECK(Count(out, "<g class=\"row ") == 3);
  CHECK(out.find("<title id=\"dc-t\">correct: candidate minus base, by tag</title>") !=
        std::string::npos);
  CHECK(out.find("<g class=\"row down\"><title>all cases: delta \xE2\x88\x92"
                 "0.100, 95% "
                 "interval \xE2\x88\x92"
                 "0.200 to \xE2\x88\x92"
                 "0.020, regressed</title>") != std::string::npos);
  // Untrusted tag text is escaped; a row with no delta is said in words and draws no mark.
  CHECK(out.find("&lt;b&gt;: delta +0.010") != std::string::npos);
  CHECK(out.find("<b>") == std::string::npos);
  CHECK(out.find("<title>empty: not compared</title>") != std::string::npos);
  CHECK(Count(out, "class=\"mk\"") == 2);
  CHECK(Count(out, "class=\"ci\"") == 2);
}
