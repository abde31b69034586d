#include "runner/report/html_bounded_text.h"

#include "runner/report/html_escape.h"

namespace plumb {
namespace {

/// "1,048,576": counts a reader compares at a glance.
std::string WithCommas(size_t n) {
  std::string digits = std::to_string(n);
  for (int i = static_cast<int>(digits.size()) - 3; i > 0; i -= 3) {
    digits.insert(static_cast<size_t>(i), ",");
  }
  return digits;
}

}  // namespace

size_t PrefixBytes(std::string_view text, size_t limit) {
  size_t seen = 0;
  for (size_t i = 0; i < text.size(); ++i) {
    if ((static_cast<unsigned char>(text[i]) & 0xC0) == 0x80) continue;  // a trail byte
    if (seen++ == limit) return i;
  }
  return text.size();
}

void AppendBoundedText(std::string* out, std::string_view text, size_t limit) {
  const size_t cut = PrefixBytes(text, limit);
  if (cut == text.size()) {
    AppendHtmlText(out, text);
    return;
  }
  size_t total = 0;
  for (char c : text) total += (static_cast<unsigned char>(c) & 0xC0) != 0x80 ? 1 : 0;
  out->append("<span class=\"long\"><span class=\"cut\">");
  AppendHtmlText(out, text.substr(0, cut));
  out->append("</span><span class=\"more\"> \xE2\x80\xA6 (" + WithCommas(total - limit) +
              " more characters) </span><button type=\"button\" class=\"all\">show all " +
              WithCommas(total) + " characters</button><template>");
  AppendHtmlText(out, text);
  out->append("</template></span>");
}

void AppendClippedText(std::string* out, std::string_view text, size_t limit) {
  const size_t cut = PrefixBytes(text, limit);
  AppendHtmlText(out, text.substr(0, cut));
  if (cut < text.size()) out->append("\xE2\x80\xA6");
}

}  // namespace plumb
