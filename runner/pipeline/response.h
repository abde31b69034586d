#ifndef PLUMB_RUNNER_PIPELINE_RESPONSE_H_
#define PLUMB_RUNNER_PIPELINE_RESPONSE_H_

/// A pipeline's reply (SPEC §5) parsed into plain values, and the parser that decides whether a
/// reply is valid. Shared by `plumb run` (replies from an adapter) and `plumb score` (recorded
/// replies in a predictions file).

#include <cstdint>
#include <map>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace plumb {

/// A citation or retrieved item: a span {doc,start,end}, a quote {doc,quote}, or doc-only {doc}.
struct SourceRef {
  std::string doc;
  std::optional<int64_t> start;
  std::optional<int64_t> end;
  std::optional<std::string> quote;
};

struct Response {
  std::optional<std::string> answer;  // nullopt: the pipeline abstained
  bool abstained = false;             // answer == null or "abstained": true
  std::vector<SourceRef> citations;
  std::vector<SourceRef> retrieved;  // ranked, best first
  bool has_retrieved = false;        // the reply carried a `retrieved` list (retrieval metrics)
  std::optional<int64_t> input_tokens;
  std::optional<int64_t> output_tokens;
  std::optional<double> service_latency_ms;  // the service's own timing, when `reply:` maps it
};

class ReplyMapping;  // runner/pipeline/reply_mapping.h

/// Parses `body` into `out` where `mapping` says the values are (ReplyMapping::Read). Returns
/// false with a one-sentence reason in `*error` when the body is not JSON, not an object, lacks
/// the answer (a missing answer is an error; null is an abstention), or has fields of the wrong
/// type. Malformed individual citations are an error too: a pipeline that emits them has a bug
/// the user wants to see.
bool ParseResponse(std::string_view body, const ReplyMapping& mapping, Response* out,
                   std::string* error);
bool ParseResponseJson(const nlohmann::json& body, const ReplyMapping& mapping, Response* out,
                       std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_RESPONSE_H_
