#include "metrics/icu_text.h"

#include <unicode/brkiter.h>
#include <unicode/locid.h>
#include <unicode/normalizer2.h>
#include <unicode/uscript.h>
#include <unicode/utypes.h>

#include <memory>

namespace plumb::metrics {

icu::UnicodeString FromUtf8(std::string_view utf8) {
  return icu::UnicodeString::fromUTF8(icu::StringPiece(utf8.data(), utf8.size()));
}

std::string ToUtf8(const icu::UnicodeString& text) {
  std::string out;
  text.toUTF8String(out);
  return out;
}

bool Nfkc(const icu::UnicodeString& text, icu::UnicodeString* out, std::string* err) {
  UErrorCode status = U_ZERO_ERROR;
  const icu::Normalizer2* nfkc = icu::Normalizer2::getNFKCInstance(status);
  if (U_SUCCESS(status)) *out = nfkc->normalize(text, status);
  if (U_FAILURE(status)) {
    *err = std::string("ICU could not apply NFKC (") + u_errorName(status) +
           "); check that libicu's data library is installed intact";
    return false;
  }
  return true;
}

icu::UnicodeString FoldCase(const icu::UnicodeString& text) {
  icu::UnicodeString folded(text);
  folded.foldCase(U_FOLD_CASE_DEFAULT);
  return folded;
}

icu::UnicodeString LowerCase(const icu::UnicodeString& text) {
  icu::UnicodeString lowered(text);
  lowered.toLower(icu::Locale::getRoot());
  return lowered;
}

bool IsPunctuation(UChar32 c) { return (U_GET_GC_MASK(c) & U_GC_P_MASK) != 0; }

bool IsPythonWhitespace(UChar32 c) {
  if (u_charType(c) == U_SPACE_SEPARATOR) return true;
  const UCharDirection bidi = u_charDirection(c);
  return bidi == U_WHITE_SPACE_NEUTRAL || bidi == U_BLOCK_SEPARATOR || bidi == U_SEGMENT_SEPARATOR;
}

bool IsPythonWordChar(UChar32 c) {
  // Python's isalnum() is isalpha() (L*) or isdecimal/isdigit/isnumeric, and the latter three
  // together mean "has a numeric value": any Numeric_Type, Unihan numerics included.
  if (c == '_') return true;
  if ((U_GET_GC_MASK(c) & U_GC_L_MASK) != 0) return true;
  return u_getIntPropertyValue(c, UCHAR_NUMERIC_TYPE) != U_NT_NONE;
}

bool IsHanOrKana(UChar32 c) {
  return uscript_hasScript(c, USCRIPT_HAN) || uscript_hasScript(c, USCRIPT_HIRAGANA) ||
         uscript_hasScript(c, USCRIPT_KATAKANA);
}

void AppendPythonSplit(const icu::UnicodeString& text, std::vector<std::string>* tokens) {
  int32_t i = 0;
  while (i < text.length()) {
    if (IsPythonWhitespace(text.char32At(i))) {
      i = text.moveIndex32(i, 1);
      continue;
    }
    int32_t end = i;
    while (end < text.length() && !IsPythonWhitespace(text.char32At(end))) {
      end = text.moveIndex32(end, 1);
    }
    tokens->push_back(ToUtf8(text.tempSubStringBetween(i, end)));
    i = end;
  }
}

namespace {

// A word BreakIterator costs far more to build than to run, and an instance must not be shared
// between threads, so each thread keeps its own.
icu::BreakIterator* ThreadWordIterator(UErrorCode* status) {
  thread_local std::unique_ptr<icu::BreakIterator> iterator;
  if (iterator == nullptr) {
    iterator.reset(icu::BreakIterator::createWordInstance(icu::Locale::getRoot(), *status));
    if (U_FAILURE(*status)) iterator.reset();
  }
  return iterator.get();
}

}  // namespace

bool WordSegments(const icu::UnicodeString& text, std::vector<WordSegment>* segments,
                  std::string* err) {
  segments->clear();
  UErrorCode status = U_ZERO_ERROR;
  icu::BreakIterator* words = ThreadWordIterator(&status);
  if (words == nullptr) {
    *err = std::string("ICU could not create a word break iterator (") + u_errorName(status) +
           "); check that libicu's data library is installed intact";
    return false;
  }
  // The iterator keeps pointing at `text` after we return; nothing reads it before the next
  // setText.
  words->setText(text);
  int32_t start = words->first();
  for (int32_t limit = words->next(); limit != icu::BreakIterator::DONE;
       start = limit, limit = words->next()) {
    segments->push_back({start, limit, words->getRuleStatus()});
  }
  return true;
}

}  // namespace plumb::metrics
