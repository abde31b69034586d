#include "runner/pipeline/event_stream.h"

#include "runner/base/human_units.h"
#include "runner/pipeline/excerpt.h"

namespace plumb {
namespace {

/// Merges `event` into `into`: objects member by member, other values replaced; null members
/// skipped (a stream's early events often carry "usage": null before the last one counts).
void MergeInto(nlohmann::json* into, nlohmann::json&& event) {
  for (auto it = event.begin(); it != event.end(); ++it) {
    if (it->is_null()) continue;
    nlohmann::json& slot = (*into)[it.key()];
    if (it->is_object() && slot.is_object()) {
      MergeInto(&slot, std::move(*it));
    } else {
      slot = std::move(*it);
    }
  }
}

std::string Brief(std::string_view text) { return std::string(Utf8Prefix(text, 200)); }

}  // namespace

EventStream::EventStream(StreamFormat format, const std::string& delta_pointer, size_t max_bytes)
    : format_(format), delta_(delta_pointer), delta_text_(delta_pointer), max_bytes_(max_bytes) {}

void EventStream::Reset() {
  bytes_ = 0;
  pending_.clear();
  data_.clear();
  has_data_ = false;
  event_type_.clear();
  done_ = false;
  merged_ = nlohmann::json::object();
  joined_.clear();
  delta_seen_ = has_text_ = false;
  events_ = 0;
  error_.clear();
}

bool EventStream::Fail(std::string sentence) {
  if (error_.empty()) error_ = std::move(sentence);
  return false;
}

bool EventStream::Feed(std::string_view bytes) {
  if (!error_.empty()) return false;
  bytes_ += bytes.size();
  if (bytes_ > max_bytes_) return Fail("stream exceeded " + FormatBytes(max_bytes_));
  size_t start = 0;
  while (start < bytes.size()) {
    const size_t newline = bytes.find('\n', start);
    if (newline == std::string_view::npos) {
      pending_.append(bytes.substr(start));
      break;
    }
    std::string_view line = bytes.substr(start, newline - start);
    if (!pending_.empty()) {
      pending_.append(line);
      line = pending_;
    }
    if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
    const bool ok = Line(line);
    pending_.clear();
    if (!ok) return false;
    start = newline + 1;
  }
  return true;
}

bool EventStream::Line(std::string_view line) {
  if (done_) return true;
  if (format_ == StreamFormat::kLines) {
    if (line.find_first_not_of(" \t") == std::string_view::npos) return true;
    return Event(line);
  }
  if (line.empty()) return Dispatch();
  if (line[0] == ':') return true;  // a comment (keep-alive)
  const size_t colon = line.find(':');
  std::string_view field = line.substr(0, colon);
  std::string_view value = colon == std::string_view::npos ? "" : line.substr(colon + 1);
  if (!value.empty() && value[0] == ' ') value.remove_prefix(1);
  if (field == "data") {
    if (has_data_) data_ += '\n';
    data_.append(value);
    has_data_ = true;
  } else if (field == "event") {
    event_type_ = std::string(value);
  }
  return true;  // id, retry and unknown fields are ignored, as the format says
}

bool EventStream::Dispatch() {
  const std::string type = std::move(event_type_);
  event_type_.clear();
  if (!has_data_) return true;
  has_data_ = false;
  std::string data = std::move(data_);
  data_.clear();
  if (type == "error") {
    return Fail("the stream sent an error event: " + Brief(data));
  }
  if (data == "[DONE]") {
    done_ = true;
    return true;
  }
  return Event(data);
}

bool EventStream::Event(std::string_view data) {
  ++events_;
  nlohmann::json event = nlohmann::json::parse(data, nullptr, /*allow_exceptions=*/false);
  if (event.is_discarded() || !event.is_object()) {
    return Fail("stream event " + std::to_string(events_) +
                " is not a JSON object: " + Brief(data));
  }
  if (event.contains(delta_)) {
    const nlohmann::json& delta = event.at(delta_);
    if (delta.is_string()) {
      const std::string& text = delta.get_ref<const std::string&>();
      joined_ += text;
      has_text_ = has_text_ || !text.empty();
      delta_seen_ = true;
    } else if (delta.is_null()) {
      delta_seen_ = true;
    } else {
      return Fail("stream event " + std::to_string(events_) + ": the text at '" + delta_text_ +
                  "' is " + delta.type_name() + ", not a string");
    }
  }
  MergeInto(&merged_, std::move(event));
  return true;
}

bool EventStream::Finish(std::string* document) {
  if (!error_.empty()) return false;
  if (!pending_.empty()) {
    std::string last = std::move(pending_);
    pending_.clear();
    if (!last.empty() && last.back() == '\r') last.pop_back();
    if (!Line(last)) return false;
  }
  if (format_ == StreamFormat::kSse && !Dispatch()) return false;
  if (events_ == 0) return Fail("the stream ended without an event");
  if (delta_seen_) {
    try {
      merged_[delta_] = joined_;
    } catch (const nlohmann::json::exception&) {
      return Fail("the stream's events put a value where the text at '" + delta_text_ +
                  "' belongs");
    }
  }
  *document = merged_.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
  return true;
}

}  // namespace plumb
