#ifndef PLUMB_RUNNER_PIPELINE_REQUEST_TEMPLATE_H_
#define PLUMB_RUNNER_PIPELINE_REQUEST_TEMPLATE_H_

/// Request templating for HTTP pipelines (SPEC §5): the `body:` template (YAML turned into JSON
/// by the loader) and the `url` become one request per case and repeat. The HTTP adapter renders
/// them; nothing else does.
///
/// Placeholders: {{id}}, {{question}}, {{repeat}}, {{input}} and {{input.KEY}} (KEY may be a
/// dotted path into nested objects: {{input.user.lang}}). Values are placed into the JSON tree,
/// never pasted into JSON text, so quotes, backslashes and control characters in a question are
/// escaped by the serializer:
///  - a string that is exactly one placeholder becomes that value with its JSON type: {{id}} and
///    {{question}} a string, {{repeat}} a number, {{input...}} whatever the case's input holds;
///  - a placeholder inside a longer string is replaced by its text (a string as is, any other
///    value as compact JSON) and the result stays a string.
/// Object keys are not templated. A {{input.KEY}} the case's input lacks is an error for that
/// case (naming the key), not a silent null: a typo in the template would otherwise send the
/// same wrong request for every case.
/// In the url, placeholders are replaced by their text, percent-encoded (RFC 3986 §2.3: every
/// byte but ALPHA / DIGIT / "-" / "." / "_" / "~").

#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

#include "runner/pipeline/adapter.h"

namespace plumb {

/// Expands `${NAME}` (runner/suite/env_expand.h syntax) in every string of a body template, before
/// any
/// {{...}} substitution, so a question's text is never expanded. Each expanded value is
/// appended to *secrets for redaction. False with a sentence in *error (naming the variable)
/// when a variable is unset or malformed.
bool ExpandBodyEnv(nlohmann::json* templ, std::vector<std::string>* secrets, std::string* error);

/// The JSON body for `request`. A null template (no `body:` given) yields the request of §5,
/// {"id", "question", "input", "repeat"}. False with a sentence in *error when a placeholder
/// is unknown or names an input key the case does not have.
bool RenderBody(const nlohmann::json& templ, const PipelineRequest& request, nlohmann::json* out,
                std::string* error);

/// The url for `request`, placeholders percent-encoded. Errors as RenderBody.
bool RenderUrl(std::string_view templ, const PipelineRequest& request, std::string* out,
               std::string* error);

/// Checks that every {{...}} in `templ` is well formed and names a known placeholder; for
/// checking a url once, before any case runs.
bool CheckPlaceholders(std::string_view templ, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_REQUEST_TEMPLATE_H_
