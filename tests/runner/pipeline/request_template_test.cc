// Request rendering for HTTP pipelines (runner/pipeline/request_template.h) from `request:`
// blocks read by the suite's own YAML reader and request-block reader. Every expected body is
// written out by hand; JSON escaping follows RFC 8259 §7 (quotation mark, reverse solidus and
// U+0000..U+001F must be escaped), percent-encoding RFC 3986 §2.1 and §2.3.

#include "runner/pipeline/request_template.h"

#include <stdlib.h>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "runner/suite/request_block_reader.h"
#include "runner/suite/yaml_reader.h"

using nlohmann::json;
using plumb::PipelineRequest;
using plumb::RequestPart;

namespace {

PipelineRequest Request(std::string question) {
  PipelineRequest r;
  r.id = "boarding-cutoff";
  r.question = std::move(question);
  r.input = json{{"channel", "kiosk"}, {"k", 3}, {"user", {{"lang", "fr"}}}};
  r.repeat = 2;
  return r;
}

// The `request:` value written in YAML, as the loader reads it (environment expanded).
RequestPart Block(const std::string& yaml, std::vector<std::string>* secrets = nullptr) {
  plumb::SourceNode root;
  plumb::Diagnostic parse_error;
  REQUIRE(plumb::ReadYaml("request: " + yaml + "\n", "test.yaml", &root, &parse_error));
  plumb::Diagnostics errors, warnings;
  plumb::NodeChecker check("test.yaml", &errors, &warnings);
  RequestPart part;
  json redacted;
  std::vector<std::string> ignored;
  const bool ok = plumb::ReadRequestBlock(root.entries.at(0).value, /*expand_env=*/true, &check,
                                          &part, &redacted, secrets ? secrets : &ignored);
  INFO(plumb::FormatDiagnostics(errors));
  REQUIRE(ok);
  return part;
}

std::string Render(const std::string& yaml, const PipelineRequest& request) {
  json out;
  std::string error;
  REQUIRE(plumb::RenderRequest(Block(yaml), request, &out, &error));
  return out.dump();
}

}  // namespace

TEST_CASE("!case question is the question as a JSON string, escaped by the serializer") {
  // The question holds a quotation mark, a backslash and a newline: RFC 8259 §7 requires all
  // three escaped, as \" \\ and \n. nlohmann::json writes object keys in sorted order.
  CHECK(Render("{q: !case question, k: 4}", Request("He said \"hi\"\\ and left\n")) ==
        R"({"k":4,"q":"He said \"hi\"\\ and left\n"})");
}

TEST_CASE("!text joins literal pieces and case fields into one string before it is encoded") {
  CHECK(Render(R"y({prompt: !text ["Q: ", !case question, " (case ", !case id, ", try ",
                    !case repeat, ")"]})y",
               Request("a \"b\"")) == R"j({"prompt":"Q: a \"b\" (case boarding-cutoff, try 2)"})j");
}

TEST_CASE("!case repeat is a number and !case input.KEY keeps the input's JSON type") {
  CHECK(Render("{repeat: !case repeat, channel: !case input.channel, k: !case input.k,"
               " lang: !case input.user.lang,"
               " label: !text [\"k=\", !case input.k, \" user=\", !case input.user]}",
               Request("q")) ==
        R"({"channel":"kiosk","k":3,"label":"k=3 user={\"lang\":\"fr\"}","lang":"fr","repeat":2})");
}

TEST_CASE("!case input is the whole input object, and nested blocks are walked") {
  CHECK(Render("{meta: {ids: [!case id, fixed, 7, null, true]}, input: !case input}",
               Request("q")) == R"({"input":{"channel":"kiosk","k":3,"user":{"lang":"fr"}},)"
                                R"("meta":{"ids":["boarding-cutoff","fixed",7,null,true]}})");
  PipelineRequest none = Request("q");
  none.input = nullptr;  // a case without input sends {}, as the default request does
  CHECK(Render("{input: !case input}", none) == R"({"input":{}})");
}

TEST_CASE("text in a question is never read as syntax") {
  CHECK(Render("{q: !case question, p: !text [\"say \", !case question]}",
               Request("{{id}} ${HOME} !case id")) ==
        R"({"p":"say {{id}} ${HOME} !case id","q":"{{id}} ${HOME} !case id"})");
}

TEST_CASE("no request block sends the request object of SPEC section 5") {
  json out;
  std::string error;
  REQUIRE(plumb::RenderRequest(std::nullopt, Request("How long?"), &out, &error));
  CHECK(out.dump() == R"({"id":"boarding-cutoff","input":{"channel":"kiosk","k":3,)"
                      R"("user":{"lang":"fr"}},"question":"How long?","repeat":2})");
}

TEST_CASE("an input key the case does not have is an error naming the key") {
  json out;
  std::string error;
  CHECK_FALSE(plumb::RenderRequest(Block("{c: !case input.chanel}"), Request("q"), &out, &error));
  CHECK(error ==
        "the case's input has no 'chanel' (used as !case input.chanel in the pipeline's request)");
  CHECK_FALSE(plumb::RenderRequest(Block("{c: !text [x, !case input.user.tz]}"), Request("q"), &out,
                                   &error));
  CHECK(error.find("'user.tz'") != std::string::npos);
}

TEST_CASE("case fields in a url are percent-encoded, and a GET's query too") {
  std::string url, error;
  std::vector<RequestPart> pieces = Block(R"y(!text ["http://127.0.0.1:1/search/", !case question,
                                             "?id=", !case id, "&r=", !case repeat])y")
                                        .items;
  // RFC 3986 §2.3 unreserved characters stay; space is %20, '&' %26, '/' %2F, and U+00E4
  // (UTF-8 C3 A4) becomes %C3%A4 (§2.1: uppercase hex digits).
  REQUIRE(plumb::RenderUrl("", pieces, Request("fares & refunds/\xC3\xA4 ~ok_-."), &url, &error));
  CHECK(url ==
        "http://127.0.0.1:1/search/fares%20%26%20refunds%2F%C3%A4%20~ok_-.?id=boarding-cutoff&r=2");
  REQUIRE(plumb::RenderUrl("http://h/plain", {}, Request("q"), &url, &error));
  CHECK(url == "http://h/plain");

  json body;
  REQUIRE(plumb::RenderRequest(Block("{q: !case question, k: 4, u: !case input.user}"),
                               Request("a&b c"), &body, &error));
  CHECK(plumb::QueryString(body) == "?k=4&q=a%26b%20c&u=%7B%22lang%22%3A%22fr%22%7D");
}

TEST_CASE("!env NAME is the variable's value as a string, and is noted as a secret") {
  REQUIRE(setenv("PLUMB_TEMPLATE_TEST_TOKEN", "s3cr3t-value", 1) == 0);
  std::vector<std::string> secrets;
  json out;
  std::string error;
  REQUIRE(plumb::RenderRequest(
      Block("{auth: {token: !text [\"Bearer \", !env PLUMB_TEMPLATE_TEST_TOKEN]}, price: $5}",
            &secrets),
      Request("q"), &out, &error));
  // Outside !env a '$' is a plain character: the request block expands nothing by itself.
  CHECK(out == json{{"auth", {{"token", "Bearer s3cr3t-value"}}}, {"price", "$5"}});
  CHECK(secrets == std::vector<std::string>{"s3cr3t-value"});
}

TEST_CASE(
    "a grader's request fills !case answer, gold and rubric, and a case's request refuses them") {
  // The grader request line as runner/run/grade_request.h writes it (keys in that order).
  PipelineRequest grading = Request("How long before departure does boarding close?");
  grading.line =
      R"({"grade":"correctness","rubric":"Pass a correct answer.","id":"boarding-cutoff",)"
      R"("question":"How long before departure does boarding close?","gold":["10 minutes"],)"
      R"("answer":"Ten \"minutes\".","gold_sources":[],"cited":[],"repeat":0})";
  CHECK(Render("{messages: [{role: system, content: !case rubric}, {role: user, content: !text "
               "[\"Gold: \", !case gold, \" Answer: \", !case answer]}], g: !case gold}",
               grading) ==
        R"({"g":["10 minutes"],"messages":[{"content":"Pass a correct answer.","role":"system"},)"
        R"({"content":"Gold: [\"10 minutes\"] Answer: Ten \"minutes\".","role":"user"}]})");
  // The same block on a case's request (no line): an error for that case, naming the field.
  json out;
  std::string error;
  CHECK_FALSE(plumb::RenderRequest(Block("{a: !case answer}"), Request("q"), &out, &error));
  CHECK(error ==
        "'!case answer' is a field of a grader's request, but this pipeline was called to answer "
        "a case; use it only in a pipeline that graders: names");
}
