// Request templating for HTTP pipelines (runner/pipeline/request_template.h). Every expected body
// is written out by hand; JSON escaping follows RFC 8259 §7 (quotation mark, reverse solidus and
// U+0000..U+001F must be escaped), percent-encoding RFC 3986 §2.1 and §2.3.

#include "runner/pipeline/request_template.h"

#include <stdlib.h>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

using nlohmann::json;
using plumb::PipelineRequest;

namespace {

PipelineRequest Request(std::string question) {
  PipelineRequest r;
  r.id = "boarding-cutoff";
  r.question = std::move(question);
  r.input = json{{"channel", "kiosk"}, {"k", 3}, {"user", {{"lang", "fr"}}}};
  r.repeat = 2;
  return r;
}

std::string Render(const json& templ, const PipelineRequest& request) {
  json out;
  std::string error;
  REQUIRE(plumb::RenderBody(templ, request, &out, &error));
  return out.dump();
}

}  // namespace

TEST_CASE("a string that is exactly {{question}} becomes the question as a JSON string") {
  // The question holds a quotation mark, a backslash and a newline: RFC 8259 §7 requires all
  // three escaped, as \" \\ and \n. nlohmann::json writes object keys in sorted order.
  const json templ = {{"q", "{{question}}"}, {"k", 4}};
  CHECK(Render(templ, Request("He said \"hi\"\\ and left\n")) ==
        R"({"k":4,"q":"He said \"hi\"\\ and left\n"})");
}

TEST_CASE("a placeholder inside a longer string is substituted before the string is encoded") {
  const json templ = {{"prompt", "Q: {{question}} (case {{id}}, try {{repeat}})"}};
  CHECK(Render(templ, Request("a \"b\"")) ==
        R"j({"prompt":"Q: a \"b\" (case boarding-cutoff, try 2)"})j");
}

TEST_CASE("{{repeat}} alone is a number and {{input.KEY}} alone keeps the input's JSON type") {
  const json templ = {{"repeat", "{{repeat}}"},
                      {"channel", "{{input.channel}}"},
                      {"k", "{{input.k}}"},
                      {"lang", "{{input.user.lang}}"},
                      {"label", "k={{input.k}} user={{input.user}}"}};
  CHECK(Render(templ, Request("q")) ==
        R"({"channel":"kiosk","k":3,"label":"k=3 user={\"lang\":\"fr\"}","lang":"fr","repeat":2})");
}

TEST_CASE("{{input}} alone is the whole input object, and nested templates are walked") {
  const json templ = {{"meta", {{"ids", {"{{id}}", "fixed", 7, nullptr, true}}}},
                      {"input", "{{input}}"}};
  CHECK(Render(templ, Request("q")) ==
        R"({"input":{"channel":"kiosk","k":3,"user":{"lang":"fr"}},)"
        R"("meta":{"ids":["boarding-cutoff","fixed",7,null,true]}})");
}

TEST_CASE("text in a question that looks like a placeholder is not expanded again") {
  const json templ = {{"q", "{{question}}"}, {"p", "say {{question}}"}};
  CHECK(Render(templ, Request("{{id}} ${HOME}")) ==
        R"({"p":"say {{id}} ${HOME}","q":"{{id}} ${HOME}"})");
}

TEST_CASE("no body template sends the request object of SPEC section 5") {
  CHECK(Render(json(), Request("How long?")) ==
        R"({"id":"boarding-cutoff","input":{"channel":"kiosk","k":3,"user":{"lang":"fr"}},)"
        R"("question":"How long?","repeat":2})");
}

TEST_CASE("an input key the case does not have is an error naming the key") {
  json out;
  std::string error;
  CHECK_FALSE(plumb::RenderBody(json{{"c", "{{input.chanel}}"}}, Request("q"), &out, &error));
  CHECK(error ==
        "the case's input has no 'chanel' (used as {{input.chanel}} in the request "
        "template)");
  CHECK_FALSE(plumb::RenderBody(json{{"c", "x {{input.user.tz}}"}}, Request("q"), &out, &error));
  CHECK(error.find("'user.tz'") != std::string::npos);
}

TEST_CASE("placeholders in the url are percent-encoded") {
  std::string url, error;
  // RFC 3986 §2.3 unreserved characters stay; space is %20, '&' %26, '/' %2F, and U+00E4
  // (UTF-8 C3 A4) becomes %C3%A4 (§2.1: uppercase hex digits).
  REQUIRE(plumb::RenderUrl("http://127.0.0.1:1/search?q={{question}}&id={{id}}&r={{repeat}}",
                           Request("fares & refunds/\xC3\xA4 ~ok_-."), &url, &error));
  CHECK(
      url ==
      "http://127.0.0.1:1/search?q=fares%20%26%20refunds%2F%C3%A4%20~ok_-.&id=boarding-cutoff&r=2");
}

TEST_CASE("url placeholders are checked once, before any case runs") {
  std::string error;
  CHECK(plumb::CheckPlaceholders("http://h/{{input.anything}}/{{id}}", &error));
  CHECK_FALSE(plumb::CheckPlaceholders("http://h/{{nope}}", &error));
  CHECK(error ==
        "unknown placeholder '{{nope}}'; use {{id}}, {{question}}, {{repeat}}, {{input}} or "
        "{{input.KEY}}");
  CHECK_FALSE(plumb::CheckPlaceholders("http://h/{{question", &error));
  CHECK(error == "unterminated '{{' in 'http://h/{{question'");
}

TEST_CASE("${VAR} in the body template expands from the environment and is noted as a secret") {
  REQUIRE(setenv("PLUMB_TEMPLATE_TEST_TOKEN", "s3cr3t-value", 1) == 0);
  unsetenv("PLUMB_TEMPLATE_TEST_UNSET");
  json templ = {{"auth", {{"token", "Bearer ${PLUMB_TEMPLATE_TEST_TOKEN}"}}},
                {"q", "{{question}}"},
                {"price", "$$5"}};
  std::vector<std::string> secrets;
  std::string error;
  REQUIRE(plumb::ExpandBodyEnv(&templ, &secrets, &error));
  // "$$" is a literal "$" (runner/suite/env_expand.h).
  CHECK(templ ==
        json{{"auth", {{"token", "Bearer s3cr3t-value"}}}, {"q", "{{question}}"}, {"price", "$5"}});
  CHECK(secrets == std::vector<std::string>{"s3cr3t-value"});

  json unset = {{"t", "${PLUMB_TEMPLATE_TEST_UNSET}"}};
  CHECK_FALSE(plumb::ExpandBodyEnv(&unset, &secrets, &error));
  CHECK(error.find("PLUMB_TEMPLATE_TEST_UNSET") != std::string::npos);
  CHECK(error.find("(in 'body')") != std::string::npos);
}
