#ifndef PLUMB_RUNNER_REPORT_TEXT_LANGUAGE_H_
#define PLUMB_RUNNER_REPORT_TEXT_LANGUAGE_H_

/// Which language a piece of suite, corpus or pipeline text is in, for the `lang` attribute the
/// HTML report puts on it (issue 20 item 2): screen readers pick their voice by it, and browsers
/// their fonts and line breaking for Japanese. The suite format records one language for the
/// whole suite (`lang:`) and none per case, so the report looks at the text: its script when
/// that names a language (kana: Japanese; Hangul: Korean; Thai; Greek; ...), and for Latin text
/// the common short words of English, French, German, Spanish, Italian, Portuguese and Dutch.

#include <string>
#include <string_view>

namespace plumb {

/// A BCP 47 primary tag ("ja", "fr", ...) for `text`, or "" when the text does not tell (too
/// short, numbers only, a tie between languages). `context`, the language around the text (the
/// question's, or the suite's `lang`), settles what the script alone cannot: Han characters
/// without kana are `context` when that is "ja", "zh" or "ko", else "zh"; Cyrillic, Arabic and
/// Devanagari text is `context` when that is a language written in the script, else the
/// script's most widely used one ("ru", "ar", "hi").
std::string GuessTextLanguage(std::string_view text, std::string_view context);

/// The language to mark on `text` in a page whose <html lang> is "en": the guess, else
/// `fallback`; "" when that is English or empty (nothing to mark).
std::string LangToMark(std::string_view text, std::string_view fallback);

/// ` lang="xx"` for AppendHtml attributes, or "" when `lang` is empty.
std::string LangAttribute(const std::string& lang);

}  // namespace plumb

#endif  // PLUMB_RUNNER_REPORT_TEXT_LANGUAGE_H_
