#include "runner/report/text_language.h"

#include <algorithm>
#include <array>
#include <unordered_map>
#include <vector>

#include "metrics/utf8.h"
#include "runner/report/html_escape.h"

namespace plumb {
namespace {

enum Script {
  kLatin,
  kKana,
  kHan,
  kHangul,
  kThai,
  kGreek,
  kHebrew,
  kArabic,
  kCyrillic,
  kDevanagari,
  kScripts
};

int ScriptOf(char32_t c) {
  if ((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
      (c >= 0xC0 && c <= 0x24F && c != 0xD7 && c != 0xF7)) {
    return kLatin;
  }
  if ((c >= 0x3040 && c <= 0x30FF) || (c >= 0x31F0 && c <= 0x31FF) ||
      (c >= 0xFF66 && c <= 0xFF9F)) {
    return kKana;
  }
  if ((c >= 0x4E00 && c <= 0x9FFF) || (c >= 0x3400 && c <= 0x4DBF)) return kHan;
  if ((c >= 0xAC00 && c <= 0xD7AF) || (c >= 0x1100 && c <= 0x11FF) ||
      (c >= 0x3130 && c <= 0x318F)) {
    return kHangul;
  }
  if (c >= 0x0E00 && c <= 0x0E7F) return kThai;
  if (c >= 0x0370 && c <= 0x03FF) return kGreek;
  if (c >= 0x0590 && c <= 0x05FF) return kHebrew;
  if (c >= 0x0600 && c <= 0x06FF) return kArabic;
  if (c >= 0x0400 && c <= 0x04FF) return kCyrillic;
  if (c >= 0x0900 && c <= 0x097F) return kDevanagari;
  return -1;
}

bool OneOf(std::string_view lang, std::initializer_list<std::string_view> list) {
  return std::find(list.begin(), list.end(), lang) != list.end();
}

constexpr const char* kLatinLanguages[] = {"en", "fr", "de", "es", "it", "pt", "nl"};

// Short words common in one language's questions and answers, lowercase, each with the set of
// kLatinLanguages (bit i for language i) it belongs to. Elisions ("l'", "d'") are words too.
const std::unordered_map<std::string, unsigned>& CommonWords() {
  static const auto* words = [] {
    const std::vector<std::vector<const char*>> lists = {
        {"the",  "and",    "of",    "to",   "is",    "are",   "in",   "for", "on", "with", "what",
         "how",  "does",   "do",    "when", "where", "which", "can",  "it",  "an", "my",   "at",
         "from", "before", "after", "much", "many",  "there", "this", "you", "be", "by",   "per",
         "or",   "up",     "not",   "no",   "yes",   "all",   "if",   "each"},
        {"le",   "la",   "les",  "des",   "du",    "un",  "une",   "est", "et",
         "pour", "avec", "dans", "sur",   "que",   "qui", "quand", "où",  "combien",
         "faut", "il",   "au",   "aux",   "l'",    "d'",  "qu'",   "ce",  "pas",
         "peut", "sont", "de",   "avant", "après", "par", "en",    "à"},
        {"der", "die",  "das", "und",  "ist", "nicht", "mit",  "für", "auf", "den", "dem",
         "ein", "eine", "wie", "wann", "wo",  "kann",  "sind", "zu",  "von", "vor", "nach"},
        {"el",     "los",   "las", "y",   "es",  "para", "con", "una", "qué", "cuándo", "dónde",
         "cuánto", "puede", "son", "del", "por", "al",   "se",  "de",  "la",  "en",     "antes"},
        {"il", "lo", "gli", "della", "di", "che", "è", "per", "con", "una", "quando", "dove",
         "quanto", "sono", "non", "del", "la", "le", "prima"},
        {"o", "os", "as", "da", "do", "das", "dos", "é", "para", "com", "uma", "quando", "onde",
         "quanto", "não", "são", "de", "em", "antes"},
        {"het", "een", "van", "wat", "hoe", "wanneer", "waar", "niet", "met", "voor", "zijn", "de",
         "en", "is", "naar"},
    };
    auto* map = new std::unordered_map<std::string, unsigned>();
    for (size_t i = 0; i < lists.size(); ++i) {
      for (const char* w : lists[i]) (*map)[w] |= 1u << i;
    }
    return map;
  }();
  return *words;
}

// Lowercases ASCII and Latin-1 capitals (enough for the word lists above).
char32_t Lower(char32_t c) {
  if ((c >= 'A' && c <= 'Z') || (c >= 0xC0 && c <= 0xDE && c != 0xD7)) return c + 32;
  return c;
}

std::string GuessLatin(std::string_view text) {
  const auto& words = CommonWords();
  constexpr size_t kLanguages = sizeof kLatinLanguages / sizeof kLatinLanguages[0];
  int score[kLanguages] = {};
  auto count = [&](const std::string& word) {
    auto it = words.find(word);
    if (it == words.end()) return;
    for (size_t i = 0; i < kLanguages; ++i) score[i] += (it->second >> i) & 1;
  };
  std::string word;
  for (size_t pos = 0; pos < text.size();) {
    const char32_t c = metrics::NextCodePoint(text, &pos);
    if (ScriptOf(c) == kLatin) {
      metrics::AppendUtf8(Lower(c), &word);
      continue;
    }
    if ((c == U'\'' || c == U'\u2019') && !word.empty() && word.size() <= 3) word += "'";
    if (!word.empty()) count(word);
    word.clear();
  }
  if (!word.empty()) count(word);
  int best = -1, top = 0, second = 0;
  for (size_t i = 0; i < kLanguages; ++i) {
    if (score[i] > top) {
      second = top;
      top = score[i];
      best = static_cast<int>(i);
    } else if (score[i] > second) {
      second = score[i];
    }
  }
  return top >= 2 && top > second ? kLatinLanguages[best] : "";
}

// Language is plain from the start of a text; a long answer is not read to its end.
constexpr size_t kBytesRead = 4096;

}  // namespace

std::string GuessTextLanguage(std::string_view text, std::string_view context) {
  text = text.substr(0, kBytesRead);
  std::array<size_t, kScripts> letters{};
  for (size_t pos = 0; pos < text.size();) {
    const int script = ScriptOf(metrics::NextCodePoint(text, &pos));
    if (script >= 0) letters[script] += 1;
  }
  // Kana and Han together are Japanese when any kana is there.
  size_t cjk = letters[kKana] + letters[kHan];
  int top = kLatin;
  size_t most = letters[kLatin];
  for (int s = kHangul; s < kScripts; ++s) {
    if (letters[s] > most) {
      most = letters[s];
      top = s;
    }
  }
  if (cjk > most) {
    if (letters[kKana] > 0) return "ja";
    return OneOf(context, {"ja", "zh", "ko"}) ? std::string(context) : "zh";
  }
  if (most == 0) return "";
  switch (top) {
    case kHangul:
      return "ko";
    case kThai:
      return "th";
    case kGreek:
      return "el";
    case kHebrew:
      return "he";
    case kArabic:
      return OneOf(context, {"fa", "ur", "ps", "ku"}) ? std::string(context) : "ar";
    case kCyrillic:
      return OneOf(context, {"uk", "bg", "sr", "mk", "be", "kk", "ky", "mn", "tg"})
                 ? std::string(context)
                 : "ru";
    case kDevanagari:
      return OneOf(context, {"mr", "ne", "sa"}) ? std::string(context) : "hi";
    default:
      return letters[kLatin] > 0 ? GuessLatin(text) : std::string();
  }
}

std::string LangToMark(std::string_view text, std::string_view fallback) {
  std::string lang = GuessTextLanguage(text, fallback);
  if (lang.empty()) lang = std::string(fallback);
  return lang == "en" ? std::string() : lang;
}

std::string LangAttribute(const std::string& lang) {
  if (lang.empty()) return std::string();
  std::string out = " lang=\"";
  AppendHtmlAttribute(&out, lang);
  return out + "\"";
}

}  // namespace plumb
