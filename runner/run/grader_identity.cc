#include "runner/run/grader_identity.h"

#include "runner/base/sha256.h"

namespace plumb {

const char* GradeScaleName(GradeScale scale) {
  switch (scale) {
    case GradeScale::kPassFail:
      return "pass-fail";
    case GradeScale::kUnit:
      return "unit";
    case GradeScale::kOneToFive:
      return "1-5";
  }
  return "pass-fail";
}

std::string GraderIdentity(const GraderConfig& grader, const PipelineConfig& pipeline) {
  // How the calls are made (concurrency, timeout, retries, rate) does not change a grade, so a
  // change to those keeps the cache.
  nlohmann::json config = pipeline.redacted_config;
  if (config.is_object()) {
    for (const char* key : {"jobs", "timeout", "retries", "rate"}) config.erase(key);
  }
  Sha256 hash;
  for (const std::string& part :
       {std::string("plumb-grader-v1"), grader.name,
        config.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace),
        std::string(GradeScaleName(grader.scale)), grader.verdict_pattern, grader.rubric}) {
    hash.Update(part);
    hash.Update("\n");
  }
  return hash.HexDigest();
}

std::string GradeKey(const std::string& identity, const std::string& request_line) {
  return Sha256Hex(identity + "\n", request_line);
}

}  // namespace plumb
