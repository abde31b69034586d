#include "runner/run/grade_request.h"

#include "metrics/utf8.h"
#include "runner/base/json_writer.h"

namespace plumb {

std::string CitedText(const SourceRef& ref, Corpus* corpus) {
  if (ref.quote && !(ref.start && ref.end)) return *ref.quote;
  if (corpus == nullptr || !ref.start || !ref.end || *ref.start < 0 || *ref.end <= *ref.start) {
    return "";
  }
  std::string error;
  const Document* document = corpus->Get(ref.doc, &error);
  std::string_view text;
  if (document == nullptr ||
      !metrics::CodePointSubstr(document->text, static_cast<size_t>(*ref.start),
                                static_cast<size_t>(*ref.end), &text)) {
    return "";
  }
  return std::string(text);
}

std::string GradeRequestLine(const GraderConfig& grader, const Case& c, const Response& answer,
                             Corpus* corpus, int repeat) {
  JsonWriter w;
  w.BeginObject()
      .PlainKey("grade")
      .String(grader.name)
      .PlainKey("rubric")
      .String(grader.rubric)
      .PlainKey("id")
      .String(c.id)
      .PlainKey("question")
      .String(c.question)
      .PlainKey("gold")
      .StringArray(c.answers)
      .PlainKey("answer");
  if (answer.answer) {
    w.String(*answer.answer);
  } else {
    w.Null();
  }
  w.PlainKey("gold_sources").BeginArray();
  for (const GoldSpan& span : c.sources) {
    w.BeginObject()
        .PlainKey("doc")
        .String(span.doc)
        .PlainKey("start")
        .Int(span.start)
        .PlainKey("end")
        .Int(span.end)
        .PlainKey("text")
        .String(span.text)
        .EndObject();
  }
  w.EndArray().PlainKey("cited").BeginArray();
  for (const SourceRef& ref : answer.citations) {
    w.BeginObject().PlainKey("doc").String(ref.doc).PlainKey("start");
    if (ref.start) {
      w.Int(*ref.start);
    } else {
      w.Null();
    }
    w.PlainKey("end");
    if (ref.end) {
      w.Int(*ref.end);
    } else {
      w.Null();
    }
    w.PlainKey("text").String(CitedText(ref, corpus)).EndObject();
  }
  w.EndArray().PlainKey("repeat").Int(repeat).EndObject();
  return w.Take();
}

}  // namespace plumb
