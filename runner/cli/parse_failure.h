#ifndef PLUMB_RUNNER_CLI_PARSE_FAILURE_H_
#define PLUMB_RUNNER_CLI_PARSE_FAILURE_H_

/// One line a user can act on when the command line does not parse: it starts with "plumb:"
/// (or "plumb CMD:"), names the word that was wrong, suggests the nearest command or option when
/// the word looks misspelt, says ranges in plain words, and points at `plumb help CMD`. CLI11's
/// own messages ("A subcommand is required", numeric ranges to 300 digits) never reach the user.

#include <CLI/CLI.hpp>
#include <string>
#include <vector>

namespace plumb {

/// `args` are the words after the program name, as given; `app` is the parser that failed
/// with `error`. Returns the message without a trailing newline.
std::string ExplainParseFailure(CLI::App& app, const std::vector<std::string>& args,
                                const CLI::ParseError& error);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_PARSE_FAILURE_H_
