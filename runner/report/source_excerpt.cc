#include "runner/report/source_excerpt.h"

#include <algorithm>

#include "runner/report/html_escape.h"
#include "runner/report/text_language.h"

namespace plumb {
namespace {

constexpr int64_t kSnap = 16;    // how far a window edge may move to reach whitespace
constexpr int64_t kMinGap = 40;  // gaps shorter than this are shown rather than left out

struct Window {
  int64_t start;
  int64_t end;
};

bool IsBreakAt(std::string_view text, const metrics::CodePointIndex& index, int64_t cp) {
  const int64_t byte = index.ByteOfCodePoint(cp);
  if (byte < 0 || byte >= static_cast<int64_t>(text.size())) return false;
  const char c = text[byte];
  return c == ' ' || c == '\n' || c == '\t' || c == '\r';
}

bool Covers(const std::vector<MarkedSpan>& spans, int64_t cp) {
  for (const MarkedSpan& s : spans) {
    if (s.start <= cp && cp < s.end) return true;
  }
  return false;
}

std::vector<MarkedSpan> Clamp(const std::vector<MarkedSpan>& spans, int64_t length) {
  std::vector<MarkedSpan> out;
  for (MarkedSpan s : spans) {
    s.start = std::clamp<int64_t>(s.start, 0, length);
    s.end = std::clamp<int64_t>(s.end, 0, length);
    if (s.start < s.end) out.push_back(std::move(s));
  }
  return out;
}

}  // namespace

SourceExcerpt BuildSourceExcerpt(std::string_view text, const metrics::CodePointIndex& index,
                                 const std::vector<MarkedSpan>& gold_in,
                                 const std::vector<MarkedSpan>& cited_in, int64_t context) {
  SourceExcerpt excerpt;
  const int64_t length = index.code_points();
  const std::vector<MarkedSpan> gold = Clamp(gold_in, length);
  const std::vector<MarkedSpan> cited = Clamp(cited_in, length);
  std::vector<int64_t> boundaries;
  for (const auto* spans : {&gold, &cited}) {
    for (const MarkedSpan& s : *spans) {
      boundaries.push_back(s.start);
      boundaries.push_back(s.end);
    }
  }
  if (boundaries.empty()) return excerpt;
  std::sort(boundaries.begin(), boundaries.end());
  boundaries.erase(std::unique(boundaries.begin(), boundaries.end()), boundaries.end());

  std::vector<Window> windows;
  for (int64_t b : boundaries) {
    Window w{std::max<int64_t>(0, b - context), std::min(length, b + context)};
    for (int64_t step = 0; step < kSnap && w.start > 0; ++step) {
      if (IsBreakAt(text, index, w.start - 1)) break;
      --w.start;
    }
    for (int64_t step = 0; step < kSnap && w.end < length; ++step) {
      if (IsBreakAt(text, index, w.end)) break;
      ++w.end;
    }
    if (!windows.empty() && w.start - windows.back().end < kMinGap) {
      windows.back().end = std::max(windows.back().end, w.end);
    } else {
      windows.push_back(w);
    }
  }

  // A few characters left out at either end of the document are shown instead.
  if (windows.front().start < kMinGap) windows.front().start = 0;
  if (length - windows.back().end < kMinGap) windows.back().end = length;
  int64_t shown_until = 0;
  for (const Window& w : windows) {
    std::vector<int64_t> cuts = {w.start, w.end};
    for (int64_t b : boundaries) {
      if (b > w.start && b < w.end) cuts.push_back(b);
    }
    std::sort(cuts.begin(), cuts.end());
    for (size_t i = 0; i + 1 < cuts.size(); ++i) {
      const int64_t from = cuts[i];
      const int64_t to = cuts[i + 1];
      ExcerptPiece piece;
      const int64_t from_byte = index.ByteOfCodePoint(from);
      piece.text = std::string(text.substr(from_byte, index.ByteOfCodePoint(to) - from_byte));
      piece.gold = Covers(gold, from);
      piece.cited = Covers(cited, from);
      piece.omitted_before = i == 0 ? from - shown_until : 0;
      for (const auto* spans : {&gold, &cited}) {
        for (const MarkedSpan& s : *spans) {
          if (s.start == from) piece.labels.push_back(s.label);
        }
      }
      excerpt.pieces.push_back(std::move(piece));
    }
    // A span that starts exactly at a window's end has its label on the next window's piece.
    shown_until = w.end;
  }
  excerpt.omitted_after = length - shown_until;
  return excerpt;
}

namespace {

void AppendGap(std::string* out, int64_t omitted) {
  if (omitted <= 0) return;
  out->append("<span class=\"gap\">[\xE2\x80\xA6 ");
  out->append(std::to_string(omitted));
  out->append(omitted == 1 ? " character" : " characters");
  out->append(" \xE2\x80\xA6]</span>");
}

}  // namespace

void AppendSourceExcerptHtml(std::string* out, const SourceExcerpt& excerpt,
                             const std::string& lang) {
  out->append("<div class=\"src\"" + LangAttribute(lang) + ">");
  for (const ExcerptPiece& piece : excerpt.pieces) {
    AppendGap(out, piece.omitted_before);
    for (const std::string& label : piece.labels) {
      out->append("<span class=\"lbl\">");
      AppendHtmlText(out, label);
      out->append("</span>");
    }
    const char* open = nullptr;
    if (piece.gold && piece.cited) {
      open = "<mark class=\"m-both\">";
    } else if (piece.gold) {
      open = "<mark class=\"m-gold\">";
    } else if (piece.cited) {
      open = "<mark class=\"m-cite\">";
    }
    if (open != nullptr) out->append(open);
    AppendHtmlText(out, piece.text);
    if (open != nullptr) out->append("</mark>");
  }
  AppendGap(out, excerpt.omitted_after);
  out->append("</div>");
}

const char* MarkLegendHtml() {
  return "<p class=\"mlegend\">Citations drawn on the source: <mark class=\"m-both\">cited "
         "gold</mark> underlined and boxed, <mark class=\"m-gold\">gold not cited</mark> "
         "underlined only, <mark class=\"m-cite\">cited, not gold</mark> boxed only; "
         "<span class=\"lbl\">G1</span> starts gold span 1 (\"missed\" when no citation "
         "reaches it), <span class=\"lbl\">C1</span> starts citation 1 (\"stray\" when it hits "
         "no gold span). Answer diffs: <span class=\"tk ok\">matched</span><del "
         "class=\"tk miss\">missing</del><ins class=\"tk extra\">extra</ins> tokens, as the "
         "suite's normalization sees them.</p>";
}

}  // namespace plumb
