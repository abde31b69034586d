#ifndef PLUMB_RUNNER_REPORT_SOURCE_EXCERPT_H_
#define PLUMB_RUNNER_REPORT_SOURCE_EXCERPT_H_

/// An excerpt of one document around a case's gold spans and cited spans, for the HTML report's
/// "citations drawn on the source text". The text is cut into pieces at every span boundary and
/// each piece says whether it lies in a gold span, a cited span, or both; text far from every
/// boundary is left out (a long span keeps its start and end and loses its middle), so an
/// excerpt stays small however large the document or the span. AppendSourceExcerptHtml draws the
/// pieces so that overlap, missed gold and stray citation read apart without colour.

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "metrics/offset_units.h"

namespace plumb {

/// A span to mark: code points, half-open, into the excerpted text. `label` is shown where the
/// span starts ("G1", "C2 stray"). Empty spans (start >= end) are not drawn.
struct MarkedSpan {
  int64_t start = 0;
  int64_t end = 0;
  std::string label;
};

struct ExcerptPiece {
  std::string text;  // UTF-8, a slice of the document
  bool gold = false;
  bool cited = false;
  int64_t omitted_before = 0;       // code points left out just before this piece
  std::vector<std::string> labels;  // of the spans that start where this piece starts
};

struct SourceExcerpt {
  std::vector<ExcerptPiece> pieces;
  int64_t omitted_after = 0;  // code points left out after the last piece
};

/// Code points of context kept on each side of a span boundary.
inline constexpr int64_t kExcerptContext = 60;

/// Builds the excerpt of `text` (whose CodePointIndex is `index`) around `gold` and `cited`.
/// Spans are clamped to the text. Context windows of `context` code points around each boundary
/// are widened by up to 16 code points to the nearest space or line break; windows closer than
/// 40 code points are joined, and so is a gap of under 40 to either end of the text (leaving out
/// less would save nothing a reader notices). No spans: an
/// empty excerpt.
SourceExcerpt BuildSourceExcerpt(std::string_view text, const metrics::CodePointIndex& index,
                                 const std::vector<MarkedSpan>& gold,
                                 const std::vector<MarkedSpan>& cited,
                                 int64_t context = kExcerptContext);

/// Appends the excerpt as a <div class="src"> of escaped text: a gold piece not cited is a
/// <mark class="m-gold"> (underlined), a cited piece outside gold a <mark class="m-cite">
/// (outlined), a piece both gold and cited a <mark class="m-both"> (underlined, outlined and
/// shaded); labels come as <span class="lbl"> before the piece, and omitted text as
/// "[… N characters …]". The page explains the marks once, in words (MarkLegendHtml). A
/// non-empty `lang` (a BCP 47 tag, text_language.h) is put on the div.
void AppendSourceExcerptHtml(std::string* out, const SourceExcerpt& excerpt,
                             const std::string& lang = std::string());

/// One paragraph that says in words what each mark and label of excerpts and diffs means.
const char* MarkLegendHtml();

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_SOURCE_EXCERPT_H_
