#ifndef PLUMB_RUNNER_PIPELINE_EVENT_STREAM_H_
#define PLUMB_RUNNER_PIPELINE_EVENT_STREAM_H_

/// EventStream reads a streamed reply (issue 21) as its bytes arrive, for the HTTP adapter's
/// write callback: server-sent events (`stream: sse`, the WHATWG event-stream format: `data:`
/// lines joined by "\n", a blank line ends an event, `:` comments and `id:`/`retry:` fields
/// ignored, `data: [DONE]` ends the stream) or one JSON object per line (`stream: lines`). Each
/// event is a JSON object. The answer is joined from the text at one JSON Pointer in each event
/// (the text delta: `/choices/0/delta/content` in the common chat-completion streaming shape);
/// everything else is merged into one reply document, later events over earlier ones (objects
/// member by member, anything else replaced; null members are skipped, so a `"usage": null` in
/// an early event does not hide the counts of the last), so citations, retrieved and usage are
/// taken from the events that carry them. Finish() gives that document with the joined text
/// at the pointer, which ReplyMapping then reads like any reply body.
///
/// A stream that cannot be read stops at the first problem, with a sentence: an event that is not
/// a JSON object, a text delta that is not a string, an `event: error`, or more than `max_bytes`
/// in all (the pipeline's max_response_bytes: the joined stream is bounded as a body is).
/// Not thread-safe; one per transfer, Reset() between calls.

#include <cstddef>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

#include "runner/suite/suite.h"

namespace plumb {

class EventStream {
 public:
  /// `delta_pointer` must be a valid JSON Pointer (the loader checked it).
  EventStream(StreamFormat format, const std::string& delta_pointer, size_t max_bytes);

  void Reset();
  /// Takes the next bytes of the body. False once the stream is broken (error() says why):
  /// stop reading.
  bool Feed(std::string_view bytes);
  /// True once an event carried non-empty text at the delta pointer (the first token).
  bool has_text() const { return has_text_; }
  /// Ends the stream: a last event without its blank line (or last line without its newline)
  /// is taken too. False with error() when the stream is broken or carried no event; otherwise
  /// *document is the merged reply as compact JSON.
  bool Finish(std::string* document);
  const std::string& error() const { return error_; }
  int events() const { return events_; }

 private:
  bool Line(std::string_view line);
  bool Dispatch();
  bool Event(std::string_view data);
  bool Fail(std::string sentence);

  StreamFormat format_;
  nlohmann::json::json_pointer delta_;
  std::string delta_text_;  // the pointer as written, for messages
  size_t max_bytes_;
  size_t bytes_ = 0;
  std::string pending_;  // bytes after the last line break
  std::string data_;     // sse: the current event's data lines
  bool has_data_ = false;
  std::string event_type_;
  bool done_ = false;  // sse: `data: [DONE]` seen; the rest is ignored
  nlohmann::json merged_ = nlohmann::json::object();
  std::string joined_;
  bool delta_seen_ = false;  // the pointer resolved in some event
  bool has_text_ = false;
  int events_ = 0;
  std::string error_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_EVENT_STREAM_H_
