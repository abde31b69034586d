#include "runner/run/grade_reply.h"

#include <re2/re2.h>

#include <cctype>
#include <cmath>
#include <cstdlib>
#include <nlohmann/json.hpp>

#include "runner/pipeline/excerpt.h"
#include "runner/pipeline/response.h"

namespace plumb {
namespace {

constexpr size_t kExcerptBytes = 200;
constexpr size_t kMaxReasonBytes = 4096;

std::string Lower(std::string_view text) {
  std::string out(text);
  for (char& ch : out) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  return out;
}

std::string Quoted(std::string_view body) {
  const std::string_view excerpt = Utf8Prefix(body, kExcerptBytes);
  return "'" + std::string(excerpt) + (excerpt.size() < body.size() ? "...'" : "'");
}

// A verdict word or a number, as a grade on the grader's scale.
bool GradeOf(std::string_view value, bool is_verdict, const GraderConfig& grader, double* grade,
             std::string* error) {
  const std::string lower = Lower(value);
  if (lower == "pass" || lower == "fail") {
    *grade = lower == "pass" ? 1 : 0;
    return true;
  }
  if (is_verdict) {
    *error = "verdict " + Quoted(value) + " is neither pass nor fail";
    return false;
  }
  const std::string text(value);
  char* end = nullptr;
  const double score = std::strtod(text.c_str(), &end);
  if (text.empty() || end != text.c_str() + text.size() || !std::isfinite(score)) {
    *error = "the grade " + Quoted(value) + " is neither pass, fail nor a number";
    return false;
  }
  switch (grader.scale) {
    case GradeScale::kPassFail:
      if (score != 0 && score != 1) {
        *error = "score " + text + " on a pass-fail grader; expected 0 or 1 (or a verdict)";
        return false;
      }
      *grade = score;
      return true;
    case GradeScale::kUnit:
      if (score < 0 || score > 1) {
        *error = "score " + text + " is outside the unit scale [0, 1]";
        return false;
      }
      *grade = score;
      return true;
    case GradeScale::kOneToFive:
      if (score < 1 || score > 5) {
        *error = "score " + text + " is outside the 1-5 scale";
        return false;
      }
      *grade = (score - 1) / 4;
      return true;
  }
  return false;
}

bool FromJson(const nlohmann::json& reply, const GraderConfig& grader, GradeReply* out,
              std::string* error) {
  auto score = reply.find("score");
  auto verdict = reply.find("verdict");
  if (score != reply.end() && score->is_number()) {
    const double value = score->get<double>();
    char text[64];
    std::snprintf(text, sizeof text, "%.17g", value);
    if (!GradeOf(text, false, grader, &out->grade, error)) return false;
  } else if (verdict != reply.end() && verdict->is_string()) {
    if (!GradeOf(verdict->get<std::string>(), true, grader, &out->grade, error)) return false;
  } else {
    *error = "the reply has neither a numeric \"score\" nor a \"verdict\" string";
    return false;
  }
  auto reason = reply.find("reason");
  if (reason != reply.end() && reason->is_string()) {
    out->reason = std::string(Utf8Prefix(reason->get<std::string>(), kMaxReasonBytes));
  }
  return true;
}

}  // namespace

bool ParseGradeReply(std::string_view body, const GraderConfig& grader, const ReplyMapping* mapping,
                     GradeReply* out, std::string* error) {
  *out = GradeReply();
  if (mapping != nullptr) {
    // The pipeline's `reply:` block says where the grader's text is (a chat-style service's
    // message content); that text is then read like a whole reply.
    const nlohmann::json reply = nlohmann::json::parse(body, nullptr, /*allow_exceptions=*/false);
    Response response;
    std::string read_error = "the reply is not a JSON object";
    if (!reply.is_object() || !mapping->Read(reply, &response, &read_error)) {
      *error = read_error + ": " + Quoted(body) + "; check the grader pipeline's reply: block";
      return false;
    }
    if (!response.answer) {
      *error =
          "the reply's mapped answer is null or a refusal, so it holds no grade: " + Quoted(body);
      return false;
    }
    return ParseGradeReply(*response.answer, grader, nullptr, out, error);
  }
  const nlohmann::json reply = nlohmann::json::parse(body, nullptr, /*allow_exceptions=*/false);
  std::string json_error;
  if (reply.is_object() && FromJson(reply, grader, out, &json_error)) return true;
  if (grader.verdict_pattern.empty()) {
    *error = (reply.is_object() ? json_error : "the reply is not a JSON object") + ": " +
             Quoted(body) +
             "; a grader replies {\"score\": N} or {\"verdict\": \"pass\"|\"fail\"}, or set "
             "verdict_pattern for free text";
    return false;
  }
  // Free text: a string reply, or the whole body.
  std::string text(body);
  if (reply.is_string()) text = reply.get<std::string>();
  RE2 pattern(grader.verdict_pattern, RE2::Quiet);
  std::string group;
  if (!pattern.ok() || !RE2::PartialMatch(text, pattern, &group)) {
    *error = "verdict_pattern found nothing in the reply " + Quoted(text);
    return false;
  }
  if (!GradeOf(group, false, grader, &out->grade, error)) return false;
  out->reason = std::string(Utf8Prefix(text, kMaxReasonBytes));
  return true;
}

}  // namespace plumb
