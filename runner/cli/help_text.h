#ifndef PLUMB_RUNNER_CLI_HELP_TEXT_H_
#define PLUMB_RUNNER_CLI_HELP_TEXT_H_

/// The words of plumb's help that CLI11 does not write itself: the metavariable of every
/// option (SUITE, RUN_DIR, FILE, N), one example per command, the exit codes, and validators
/// that say a range in plain words. main applies them to the option tables once they are built,
/// so `--help`, `plumb help CMD`, the man page and the shell completions all read one source.

#include <CLI/CLI.hpp>
#include <string>
#include <vector>

namespace plumb {

/// Sets each option's metavariable by its name (`--out` DIR, `--html` FILE, ...; an unnamed
/// one by its type: N for integers, X for numbers, VALUE otherwise), and each command's footer
/// (an example and the exit codes). Call after every option is added.
void ApplyHelpConventions(CLI::App* app);

/// The metavariable of an option (its type name) or of a positional argument (RUN_DIR for
/// BASE_DIR and CAND_DIR, FILE for PREDICTIONS, else its own name), for the help, the man page
/// and the completions' choice of file or folder names.
std::string Metavar(const CLI::Option& option);

/// "plumb run suites/ferry.yaml ..." for each command; empty for an unknown name.
std::string CommandExample(const std::string& command);

/// The exit codes of SPEC §8, one per line, as `--help` and the man page print them.
std::string ExitCodeText();

/// Validators whose failure reads "must be at least 1 (got 0)" rather than a numeric range.
CLI::Validator AtLeast(long long minimum);
/// ... and "must be auto, always or never (got 'sometimes')".
CLI::Validator OneOf(std::vector<std::string> choices);

}  // namespace plumb

#endif  // PLUMB_RUNNER_CLI_HELP_TEXT_H_
