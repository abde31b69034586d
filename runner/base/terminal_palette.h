#ifndef PLUMB_RUNNER_BASE_TERMINAL_PALETTE_H_
#define PLUMB_RUNNER_BASE_TERMINAL_PALETTE_H_

/// The ANSI colours the terminal summaries use (run and drift), and the rule for using them:
/// only on a terminal, and never when NO_COLOR is set (https://no-color.org convention).

#include <cstdio>

namespace plumb {

struct Palette {
  const char* good = "";
  const char* bad = "";
  const char* dim = "";
  const char* bold = "";
  const char* reset = "";
};

/// Escape sequences when `colour`, empty strings otherwise.
Palette MakePalette(bool colour);

/// True when `stream` is a terminal and NO_COLOR is unset or empty.
bool UseColour(std::FILE* stream);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_TERMINAL_PALETTE_H_
