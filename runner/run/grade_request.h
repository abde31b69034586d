#ifndef PLUMB_RUNNER_RUN_GRADE_REQUEST_H_
#define PLUMB_RUNNER_RUN_GRADE_REQUEST_H_

/// The request a grader pipeline receives for one answer: {"grade", "rubric", "id", "question",
/// "gold", "answer", "gold_sources", "cited", "repeat"} as one line of compact JSON (keys in
/// that order). Everything the pipeline under test wrote travels as JSON string values, never
/// spliced into the rubric or any other text.

#include <string>

#include "runner/pipeline/response.h"
#include "runner/suite/corpus.h"
#include "runner/suite/suite.h"

namespace plumb {

/// `answer` is the reply (its answer null when it abstained). Cited spans carry the corpus
/// text of [start, end) in code points (a quote carries its quote; a doc-only citation, or one
/// the corpus cannot place, an empty text). `corpus` may be null.
/// The text a citation points at, as the grader request's "cited" carries it: the corpus text
/// of [start, end) in code points, a quote's own text, or "" (doc-only, or not placeable).
std::string CitedText(const SourceRef& ref, Corpus* corpus);

std::string GradeRequestLine(const GraderConfig& grader, const Case& c, const Response& answer,
                             Corpus* corpus, int repeat);

}  // namespace plumb

#endif  // PLUMB_RUNNER_RUN_GRADE_REQUEST_H_
