#ifndef PLUMB_RUNNER_PIPELINE_REQUEST_TEMPLATE_H_
#define PLUMB_RUNNER_PIPELINE_REQUEST_TEMPLATE_H_

/// Renders an HTTP pipeline's `request:` block and `url` (runner/suite/request_block_reader.h
/// describes the syntax) into one request per case and repeat. The HTTP adapter calls it;
/// nothing else does. Pure functions, safe on several threads.
///
/// Values are placed into the JSON tree, never pasted into JSON text, so quotes, backslashes
/// and control characters in a question are escaped by the serializer:
///  - `!case FIELD` becomes the value with its JSON type: id and question strings, repeat a
///    number, input the case's object ({} when it has none), input.KEY what the input holds;
///  - a `!text` list becomes one string: literal pieces as written, a field's string as is,
///    any other value as compact JSON.
/// A field input.KEY the case's input lacks is an error for that case (naming the key), not a
/// silent null: a typo would otherwise send the same wrong request for every case.
/// A grader's request (PipelineRequest::line set) also has the fields of its line: grade,
/// rubric, gold, answer, gold_sources and cited, each with its JSON type (gold a list of
/// strings, answer a string or null); in a case's request they are an error of that case.
/// In a `url: !text` list, each field's text is percent-encoded (RFC 3986 §2.3: every byte but
/// ALPHA / DIGIT / "-" / "." / "_" / "~"); a GET's query parameters are encoded the same way.

#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "runner/pipeline/adapter.h"
#include "runner/suite/suite.h"

namespace plumb {

/// The JSON body for `request`. No block yields the request of §5,
/// {"id", "question", "input", "repeat"}. False with a sentence in *error when a field names an
/// input key the case does not have.
bool RenderRequest(const std::optional<RequestPart>& block, const PipelineRequest& request,
                   nlohmann::json* out, std::string* error);

/// The url for `request`: `url` when `pieces` is empty, else the pieces joined with each case
/// field percent-encoded. Errors as RenderRequest.
bool RenderUrl(const std::string& url, const std::vector<RequestPart>& pieces,
               const PipelineRequest& request, std::string* out, std::string* error);

/// A GET's query string ("?q=...&k=4", empty for an empty object): each member of the rendered
/// request object, its value's text percent-encoded (strings as is, others as compact JSON).
/// `body` must be an object.
std::string QueryString(const nlohmann::json& body);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_REQUEST_TEMPLATE_H_
