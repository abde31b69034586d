#ifndef PLUMB_RUNNER_SUITE_ENV_EXPAND_H_
#define PLUMB_RUNNER_SUITE_ENV_EXPAND_H_

/// `${NAME}` expansion for pipeline configs (SPEC §5): values come from the process environment,
/// and every expansion is tracked so output files can show "***" instead of the secret. The suite
/// loader expands command items, env values, cwd, url and header values with it.

#include <string>
#include <string_view>
#include <vector>

#include "runner/suite/suite.h"

namespace plumb {

/// Expands `templ` into out->value, with out->redacted = `templ` where each `${NAME}` became
/// "***". Syntax: `${NAME}` (NAME = [A-Za-z_][A-Za-z0-9_]*) and `$$` for a literal `$`. A `$`
/// followed by anything else is kept as written, except `$NAME`, which is refused because it
/// reads like shell expansion that would not happen. Every non-empty expanded value is appended
/// to *secrets (which may be null). Returns false with a sentence in *error for an unset
/// variable (naming it), an unterminated `${` or a malformed name; *out is then unspecified.
/// Reads the environment with getenv: not safe against a concurrent setenv.
bool ExpandEnv(std::string_view templ, ExpandedString* out, std::vector<std::string>* secrets,
               std::string* error);

/// ExpandEnv for a URL (`url:`): a value that lands in the path, query, fragment or user info
/// is percent-encoded (every byte but RFC 3986's unreserved letters, digits, '-', '.', '_' and
/// '~'), so a token with '&' or '/' stays one query value. A value that lands in the scheme
/// or the host and port is used as is and must fit there; otherwise false with a sentence
/// naming the variable. Both the value and its encoded form go to *secrets.
bool ExpandEnvInUrl(std::string_view templ, ExpandedString* out, std::vector<std::string>* secrets,
                    std::string* error);

/// ExpandEnv without reading the environment: out->value is `templ` unchanged, out->redacted as
/// ExpandEnv would make it. For loading a suite whose pipelines will not run (`plumb check`,
/// `plumb score`), so unset variables are no error; malformed references still are.
bool RedactEnv(std::string_view templ, ExpandedString* out, std::string* error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_SUITE_ENV_EXPAND_H_
