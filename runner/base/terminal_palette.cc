#include "runner/base/terminal_palette.h"

#include <unistd.h>

#include <atomic>
#include <cstdlib>
#include <cstring>

namespace plumb {
namespace {

std::atomic<ColourChoice> colour_choice{ColourChoice::kAuto};

}  // namespace

void SetColourChoice(ColourChoice choice) { colour_choice = choice; }

Palette MakePalette(bool colour) {
  if (!colour) return {};
  return {"\033[32m", "\033[31m", "\033[2m", "\033[1m", "\033[0m"};
}

bool UseColour(std::FILE* stream) {
  if (colour_choice == ColourChoice::kAlways) return true;
  if (colour_choice == ColourChoice::kNever) return false;
  const char* term = std::getenv("TERM");
  if (term != nullptr && std::strcmp(term, "dumb") == 0) return false;
  const char* no_colour = std::getenv("NO_COLOR");
  if (no_colour != nullptr && no_colour[0] != '\0') return false;
  return isatty(fileno(stream)) == 1;
}

}  // namespace plumb
