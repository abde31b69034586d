// The `mlqa` profile (SPEC §6.1): the MLQA evaluation script's normalize_answer followed by the
// split its f1_score applies, as Python 3.11 runs it. Transcribed from memory of
// mlqa_evaluation_v1.py (Lewis et al. 2020); tests/reference/mlqa_normalize_reference.py holds
// the same definition in Python and the differential check compares the two.
//
//   PUNCT = {chr(i) for i in range(sys.maxunicode)
//            if unicodedata.category(chr(i)).startswith('P')}.union(string.punctuation)
//   normalize_answer(s, lang) =
//       white_space_fix(remove_articles(remove_punc(lower(s)), lang), lang)
//   tokens = normalize_answer(s, lang).split()
//
// lower is str.lower(); remove_punc deletes PUNCT characters; remove_articles replaces the
// language's article regex by ' '; white_space_fix is str.split() for en, es, de, vi, ar, hi and
// mixed_segmentation for zh. The script raises on any other language; this profile cannot fail,
// so it treats an unknown code like hi (no articles, whitespace tokens).

#include <string>
#include <string_view>
#include <vector>

#include "metrics/articles.h"
#include "metrics/icu_text.h"
#include "metrics/normalize.h"

namespace plumb::metrics {

namespace {

// string.punctuation: the ASCII graphic characters that are neither letters nor digits, which
// adds the symbols $+<=>^`|~ to the P* characters.
constexpr std::string_view kAsciiPunctuation = R"(!"#$%&'()*+,-./:;<=>?@[\]^_`{|}~)";

bool InPunct(UChar32 c) {
  if (c < 0x80 && kAsciiPunctuation.find(static_cast<char>(c)) != std::string_view::npos) {
    return true;
  }
  return IsPunctuation(c);
}

icu::UnicodeString RemovePunctuation(const icu::UnicodeString& text) {
  icu::UnicodeString kept;
  for (int32_t i = 0; i < text.length(); i = text.moveIndex32(i, 1)) {
    const UChar32 c = text.char32At(i);
    if (!InPunct(c)) kept.append(c);
  }
  return kept;
}

// re.sub(r'\b(w1|w2|...)\b', ' ', text). Every alternative is made of \w characters only, so a
// match is exactly a maximal run of \w characters that equals one of the words. Combining marks
// are not \w: in a decomposed "la\u0300" the run "la" is the Spanish article.
icu::UnicodeString ReplaceArticleWords(const icu::UnicodeString& text,
                                       const std::vector<std::string_view>& words) {
  std::vector<icu::UnicodeString> articles;
  for (std::string_view word : words) articles.push_back(FromUtf8(word));
  icu::UnicodeString out;
  int32_t i = 0;
  while (i < text.length()) {
    if (!IsPythonWordChar(text.char32At(i))) {
      out.append(text.char32At(i));
      i = text.moveIndex32(i, 1);
      continue;
    }
    int32_t end = i;
    while (end < text.length() && IsPythonWordChar(text.char32At(end))) {
      end = text.moveIndex32(end, 1);
    }
    const icu::UnicodeString run = text.tempSubStringBetween(i, end);
    bool is_article = false;
    for (const icu::UnicodeString& word : articles) {
      if (run == word) is_article = true;
    }
    if (is_article) {
      out.append(static_cast<UChar>(' '));
    } else {
      out.append(run);
    }
    i = end;
  }
  return out;
}

// re.sub('\sال^|ال', ' ', text). The first alternative needs the start of the string (^, no
// MULTILINE) after a consumed character, so it never matches: every "ال" anywhere, inside words
// too, becomes ' '. Kept as the script has it.
icu::UnicodeString ReplaceArabicArticle(const icu::UnicodeString& text) {
  icu::UnicodeString out(text);
  out.findAndReplace(FromUtf8(kArabicArticle), icu::UnicodeString(static_cast<UChar>(' ')));
  return out;
}

icu::UnicodeString RemoveArticles(const icu::UnicodeString& text, std::string_view lang) {
  if (lang == "ar") return ReplaceArabicArticle(text);
  const std::vector<std::string_view>& words = MlqaArticleWords(lang);
  if (words.empty()) return text;
  return ReplaceArticleWords(text, words);
}

// mixed_segmentation: each character matching [\u4e00-\u9fa5] (the CJK Unified Ideographs block
// as of Unicode 4.1, not its later tail U+9FA6..U+9FFF nor the extension blocks) or in PUNCT is
// its own token; the text between them is split on whitespace. PUNCT is already gone by now.
std::vector<std::string> MixedSegmentation(const icu::UnicodeString& text) {
  std::vector<std::string> tokens;
  icu::UnicodeString pending;
  for (int32_t i = 0; i < text.length(); i = text.moveIndex32(i, 1)) {
    const UChar32 c = text.char32At(i);
    if ((c >= 0x4E00 && c <= 0x9FA5) || InPunct(c)) {
      AppendPythonSplit(pending, &tokens);
      pending.remove();
      tokens.push_back(ToUtf8(icu::UnicodeString(c)));
    } else {
      pending.append(c);
    }
  }
  AppendPythonSplit(pending, &tokens);
  return tokens;
}

}  // namespace

std::vector<std::string> NormalizeMlqaTokens(std::string_view text, std::string_view lang) {
  const icu::UnicodeString normalized =
      RemoveArticles(RemovePunctuation(LowerCase(FromUtf8(text))), lang);
  // white_space_fix joins the tokens with ' ' (dropping whitespace-only ones, of which neither
  // tokenizer yields any) and f1_score splits the result again: the tokens come out unchanged.
  if (lang == "zh") return MixedSegmentation(normalized);
  std::vector<std::string> tokens;
  AppendPythonSplit(normalized, &tokens);
  return tokens;
}

}  // namespace plumb::metrics
