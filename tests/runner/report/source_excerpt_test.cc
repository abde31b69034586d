// Excerpts of a document around gold and cited spans, for the HTML report. Every offset below
// is counted by hand on the texts given (code points, half-open); the rules applied are the
// ones runner/report/source_excerpt.h states (context windows around each span boundary, widened to
// whitespace by up to 16 code points, gaps under 40 code points shown).

#include "runner/report/source_excerpt.h"

#include <catch2/catch.hpp>
#include <string>
#include <vector>

using plumb::AppendSourceExcerptHtml;
using plumb::BuildSourceExcerpt;
using plumb::ExcerptPiece;
using plumb::MarkedSpan;
using plumb::SourceExcerpt;
using plumb::metrics::CodePointIndex;

namespace {

SourceExcerpt Build(const std::string& text, const std::vector<MarkedSpan>& gold,
                    const std::vector<MarkedSpan>& cited, int64_t context) {
  const CodePointIndex index(text);
  return BuildSourceExcerpt(text, index, gold, cited, context);
}

// "g" gold, "c" cited, "gc" both, "" neither; then the text.
std::vector<std::string> Show(const SourceExcerpt& e) {
  std::vector<std::string> out;
  for (const ExcerptPiece& p : e.pieces) {
    std::string kind = std::string(p.gold ? "g" : "") + (p.cited ? "c" : "");
    std::string labels;
    for (const std::string& l : p.labels) labels += "[" + l + "]";
    out.push_back(kind + labels +
                  (p.omitted_before > 0 ? "(-" + std::to_string(p.omitted_before) + ")" : "") +
                  ":" + p.text);
  }
  return out;
}

// "w000 w001 ... w099 ": word k at [5k, 5k + 4), a space at 5k + 4; 500 code points.
std::string Words() {
  std::string text;
  for (int k = 0; k < 100; ++k) {
    char word[8];
    std::snprintf(word, sizeof word, "w%03d ", k);
    text += word;
  }
  return text;
}

}  // namespace

TEST_CASE("source excerpt: overlap, gold only and cited only pieces", "[source_excerpt]") {
  // "The quick brown fox jumps over the lazy dog.": "brown " is [10, 16), "fox" [16, 19).
  const std::string text = "The quick brown fox jumps over the lazy dog.";
  const SourceExcerpt e = Build(text, {{16, 19, "G1"}}, {{10, 19, "C1"}}, 100);
  CHECK(Show(e) == std::vector<std::string>{":The quick ", "c[C1]:brown ", "gc[G1]:fox",
                                            ": jumps over the lazy dog."});
  CHECK(e.omitted_after == 0);
  std::string html;
  AppendSourceExcerptHtml(&html, e);
  CHECK(html ==
        "<div class=\"src\">The quick <span class=\"lbl\">C1</span><mark class=\"m-cite\">brown "
        "</mark><span class=\"lbl\">G1</span><mark class=\"m-both\">fox</mark> jumps over the "
        "lazy dog.</div>");
}

TEST_CASE("source excerpt: text far from every boundary is left out", "[source_excerpt]") {
  // Gold "w050" = [250, 254), context 10. Boundary 250 -> [240, 260]: 239 is a space, so the
  // start stays; 260 starts "w052", so the end moves to the space at 264. Boundary 254 ->
  // [244, 264]: the start walks back to 240 (just after the space at 239). One window [240, 264).
  const SourceExcerpt e = Build(Words(), {{250, 254, "G1"}}, {}, 10);
  CHECK(Show(e) == std::vector<std::string>{"(-240):w048 w049 ", "g[G1]:w050", ": w051 w052"});
  CHECK(e.omitted_after == 500 - 264);
}

TEST_CASE("source excerpt: distant spans get separate windows", "[source_excerpt]") {
  // Windows [40, 64) around "w010" and [390, 414) around "w080"; 326 code points between.
  const SourceExcerpt e = Build(Words(), {{50, 54, "G1"}}, {{400, 404, "C1 stray"}}, 10);
  CHECK(Show(e) == std::vector<std::string>{"(-40):w008 w009 ", "g[G1]:w010", ": w011 w012",
                                            "(-326):w078 w079 ", "c[C1 stray]:w080",
                                            ": w081 w082"});
  CHECK(e.omitted_after == 86);
}

TEST_CASE("source excerpt: a long span keeps its start and end, not its middle",
          "[source_excerpt]") {
  // Gold [100, 400), context 10. Boundary 100 -> [90, 110]: 89 is a space, so the start stays;
  // 110 starts "w022", so the end moves to the space at 114. Boundary 400 -> [390, 414) the
  // same way. The 276 code points of [114, 390) are left out; the piece after the gap is still
  // gold.
  const SourceExcerpt e = Build(Words(), {{100, 400, "G1"}}, {}, 10);
  CHECK(Show(e) == std::vector<std::string>{"(-90):w018 w019 ", "g[G1]:w020 w021 w022",
                                            "g(-276):w078 w079 ", ":w080 w081 w082"});
}

TEST_CASE("source excerpt: a gap under 40 code points is shown", "[source_excerpt]") {
  // Spans at "w010" and "w020" (100 - 54 = 46 apart) with context 10: windows [40, 64) and
  // [90, 114) are 26 code points apart, under 40, so they join into [40, 114).
  const SourceExcerpt e = Build(Words(), {{50, 54, "G1"}, {100, 104, "G2"}}, {}, 10);
  REQUIRE(e.pieces.size() == 5);
  CHECK(e.pieces[0].omitted_before == 40);
  for (size_t i = 1; i < e.pieces.size(); ++i) CHECK(e.pieces[i].omitted_before == 0);
  CHECK(e.pieces[2].text == " w011 w012 w013 w014 w015 w016 w017 w018 w019 ");
}

TEST_CASE("source excerpt: offsets are code points, not bytes", "[source_excerpt]") {
  // "café ☕ crème": c a f é ' ' ☕ ' ' c r è m e; the cup is code point 5 (bytes 6-8).
  const std::string text = "caf\xC3\xA9 \xE2\x98\x95 cr\xC3\xA8me";
  const SourceExcerpt e = Build(text, {{5, 6, "G1"}}, {}, 100);
  CHECK(Show(e) ==
        std::vector<std::string>{":caf\xC3\xA9 ", "g[G1]:\xE2\x98\x95", ": cr\xC3\xA8me"});
}

TEST_CASE("source excerpt: spans are clamped to the text, empty ones dropped", "[source_excerpt]") {
  const std::string text = "The quick brown fox jumps over the lazy dog.";  // 44 code points
  const SourceExcerpt e = Build(text, {{40, 100, "G1"}, {7, 7, "G2"}}, {}, 100);
  CHECK(Show(e) ==
        std::vector<std::string>{":The quick brown fox jumps over the lazy ", "g[G1]:dog."});
  CHECK(Build(text, {}, {}, 100).pieces.empty());
}

TEST_CASE("source excerpt: the text is escaped and the gap is said in words", "[source_excerpt]") {
  std::string text = "a<b>&c";
  text += std::string(100, ' ') + "end";
  const SourceExcerpt e = Build(text, {{1, 4, "G1"}}, {}, 5);
  std::string html;
  AppendSourceExcerptHtml(&html, e);
  CHECK(html.find("<mark class=\"m-gold\">&lt;b&gt;</mark>&amp;") != std::string::npos);
  CHECK(html.find("characters \xE2\x80\xA6]</span></div>") != std::string::npos);
}
