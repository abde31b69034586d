#ifndef PLUMB_RUNNER_CLI_SHELL_COMPLETION_H_
#define PLUMB_RUNNER_CLI_SHELL_COMPLETION_H_

/// Shell completion scripts and the man page, generated from plumb's own option tables (the
/// CLI11 app main builds), so they cannot drift from what the parser accepts. `plumb completion
/// bash|zsh` prints a script; the build writes all three into build/share/ and `cmake --install`
/// installs them. Options whose metavariable is FILE complete file names, DIR and RUN_DIR
/// folder names, SUITE suite files.

#include <CLI/CLI.hpp>
#include <string>

namespace plumb {

std::string BashCompletion(CLI::App& app);
std::string ZshCompletion(CLI::App& app);
/// A man(7) page, section 1: synopsis, every command with its options, exit codes, examples.
std::string ManPage(CLI::App& app, const std::string& version);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_SHELL_COMPLETION_H_
