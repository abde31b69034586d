#ifndef PLUMB_METRICS_SPAN_H_
#define PLUMB_METRICS_SPAN_H_

/// The span types the citation (SPEC §6.3) and retrieval (§6.4) metrics compare: gold source
/// spans from the suite, and the citations or retrieved items a pipeline returned. Plain values;
/// the runner converts its suite and response types into these before scoring.

#include <cstdint>
#include <functional>
#include <optional>
#include <string>

namespace plumb::metrics {

/// A gold source span: code-point offsets, half-open [start, end), into the document's UTF-8
/// text. `doc` is the corpus-relative id ("/" separators); ids are compared byte for byte.
struct GoldSpanRef {
  std::string doc;
  int64_t start = 0;
  int64_t end = 0;
};

/// A citation or retrieved item as the pipeline gave it: a span {doc, start, end} in code
/// points, a quote {doc, quote}, or doc-only {doc}. When both start and end are set the item is
/// a span and any quote is ignored; exactly one of start/end set is a malformed item.
struct CitedRef {
  std::string doc;
  std::optional<int64_t> start;
  std::optional<int64_t> end;
  std::optional<std::string> quote;
};

/// Looks up a document's text by id; returns nullptr when the corpus has no such doc. The
/// caller (runner) owns the texts; they must outlive the call that uses the lookup.
using DocumentLookup = std::function<const std::string*(const std::string& doc)>;

}  // namespace plumb::metrics

#endif  // PLUMB_METRICS_SPAN_H_
