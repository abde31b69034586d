#ifndef PLUMB_RUNNER_BASE_TERMINAL_PALETTE_H_
#define PLUMB_RUNNER_BASE_TERMINAL_PALETTE_H_

/// The ANSI colours the terminal summaries use (run and drift), and the rule for using them:
/// `--color always|never` decides; with `auto` (the default) colour goes only to a terminal,
/// never when NO_COLOR is set (https://no-color.org convention) or TERM is "dumb".

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

/// The user's `--color` choice; set once by main before any command runs.
enum class ColourChoice { kAuto, kAlways, kNever };
void SetColourChoice(ColourChoice choice);

/// kAlways: true; kNever: false; kAuto: true when `stream` is a terminal, NO_COLOR is unset or
/// empty and TERM is not "dumb".
bool UseColour(std::FILE* stream);

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_TERMINAL_PALETTE_H_
