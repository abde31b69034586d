#include "metrics/articles.h"

namespace plumb::metrics {

namespace {

// MLQA's remove_articles (mlqa_evaluation_v1.py, from memory):
//   en: \b(a|an|the)\b
//   es: \b(un|una|unos|unas|el|la|los|las)\b
//   de: \b(ein|eine|einen|einem|eines|einer|der|die|das|den|dem|des)\b
//   vi: \b(của|là|cái|chiếc|những)\b   (not all articles: "của" is "of", "là" is "is")
const std::vector<std::string_view> kEnglish = {"a", "an", "the"};
const std::vector<std::string_view> kSpanish = {"un", "una", "unos", "unas",
                                                "el", "la",  "los",  "las"};
const std::vector<std::string_view> kGerman = {"ein", "eine", "einen", "einem", "eines", "einer",
                                               "der", "die",  "das",   "den",   "dem",   "des"};
const std::vector<std::string_view> kVietnamese = {"c\u1ee7a", "l\u00e0", "c\u00e1i", "chi\u1ebfc",
                                                   "nh\u1eefng"};
// Added for the unicode profile; from memory / common practice. French "l" is the elided
// article of "l'été" when the apostrophe is written apart from the noun.
const std::vector<std::string_view> kFrench = {"le", "la", "les", "l", "un", "une", "des"};
const std::vector<std::string_view> kItalian = {"il", "lo", "la",  "i",  "gli",
                                                "le", "un", "uno", "una"};
const std::vector<std::string_view> kPortuguese = {"o", "a", "os", "as", "um", "uma"};
const std::vector<std::string_view> kNone;

}  // namespace

const std::vector<std::string_view>& MlqaArticleWords(std::string_view lang) {
  if (lang == "en") return kEnglish;
  if (lang == "es") return kSpanish;
  if (lang == "de") return kGerman;
  if (lang == "vi") return kVietnamese;
  return kNone;
}

const std::vector<std::string_view>& ArticleWords(std::string_view lang) {
  if (lang == "fr") return kFrench;
  if (lang == "it") return kItalian;
  if (lang == "pt") return kPortuguese;
  return MlqaArticleWords(lang);
}

}  // namespace plumb::metrics
