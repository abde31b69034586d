#include "runner/base/terminal_palette.h"

#include <unistd.h>

#include <cstdlib>

namespace plumb {

Palette MakePalette(bool colour) {
  if (!colour) return {};
  return {"\033[32m", "\033[31m", "\033[2m", "\033[1m", "\033[0m"};
}

bool UseColour(std::FILE* stream) {
  const char* no_colour = std::getenv("NO_COLOR");
  if (no_colour != nullptr && no_colour[0] != '\0') return false;
  return isatty(fileno(stream)) == 1;
}

}  // namespace plumb
