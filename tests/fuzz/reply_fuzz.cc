// Fuzz target: a pipeline's reply body, which is untrusted (SPEC §5: a pipeline that prints
// garbage costs one case). ParseResponse must answer true, or false with a reason, for any
// bytes, under the default reply map and a renamed one, and never crash or throw. When the
// one-pass flat reader (runner/pipeline/flat_reply.h) takes the bytes, its header's contract is
// checked: nlohmann reads an object from them, and FlatReply::Write gives the text
// JsonWriter::Value gives for that object.
#include <cstddef>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

#include "runner/base/json_writer.h"
#include "runner/pipeline/flat_reply.h"
#include "runner/pipeline/reply_mapping.h"
#include "runner/pipeline/response.h"
#include "tests/fuzz/fuzz_check.h"

namespace {

void CheckParse(std::string_view body, const plumb::ReplyMapping& map) {
  plumb::Response response;
  std::string error;
  if (plumb::ParseResponse(body, map, &response, &error)) {
    FUZZ_CHECK(response.answer.has_value() || response.abstained,
               "a reply with no answer must be an abstention");
  } else {
    FUZZ_CHECK(!error.empty(), "a refused reply must come with a reason");
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string_view body(reinterpret_cast<const char*>(data), size);
  CheckParse(body, plumb::ProtocolReplyMapping());
  static const std::unique_ptr<plumb::ReplyMapping> renamed = [] {
    plumb::ReplyFields fields;
    fields.answer = "/data/text";
    fields.refusal = "/data/refusal";
    fields.abstain_when = "(?i)I (do not|don't) know";
    fields.input_tokens = "/usage/prompt_tokens";
    fields.citations = plumb::ReplyFields::SourceList{"/data/refs", "source", "", "", ""};
    fields.retrieved = plumb::ReplyFields::SourceList{"/hits", "/document/path", "", "", ""};
    std::string error;
    return plumb::ReplyMapping::Create(fields, &error);
  }();
  CheckParse(body, *renamed);

  plumb::FlatReply flat;
  if (plumb::ReadFlatReply(body, &flat)) {
    const nlohmann::json json = nlohmann::json::parse(body, nullptr, /*allow_exceptions=*/false);
    FUZZ_CHECK(!json.is_discarded() && json.is_object(),
               "the flat reader took a line nlohmann does not read as an object");
    plumb::JsonWriter fast, general;
    flat.Write(&fast);
    general.Value(json);
    FUZZ_CHECK(fast.text() == general.text(),
               "the flat reader's object differs from nlohmann's reading of the line");
  }
  plumb::FlatPrediction prediction;
  plumb::FlatReply scratch;
  if (plumb::ReadFlatPrediction(body, 1000, &scratch, &prediction)) {
    FUZZ_CHECK(prediction.repeat >= 0 && prediction.repeat <= 1000,
               "a prediction's repeat outside the bound was taken");
  }
  return 0;
}
