#include "runner/suite/diagnostic.h"

namespace plumb {

std::string Diagnostic::Format(const char* severity) const {
  std::string out = pos.file.empty() ? std::string("<input>") : pos.file;
  if (pos.line > 0) {
    out += ":" + std::to_string(pos.line);
    if (pos.column > 0) out += ":" + std::to_string(pos.column);
  }
  out += std::string(": ") + severity + ": " + message;
  if (!hint.empty()) out += "; " + hint;
  return out;
}

std::string FormatDiagnostics(const Diagnostics& diagnostics) {
  std::string out;
  for (const Diagnostic& d : diagnostics) out += d.Format() + "\n";
  return out;
}

}  // namespace plumb
