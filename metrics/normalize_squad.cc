// The `squad` profile (SPEC §6.1): SQuAD v1.1/v2.0 evaluation's normalize_answer, reproduced
// character for character as CPython 3 runs it:
//   white_space_fix(remove_articles(remove_punc(lower(s))))
// lower           str.lower(): simple lowercase mappings, the one unconditional full mapping
//                 (U+0130 -> "i" U+0307) and the Final_Sigma context for U+03A3.
// remove_punc     deletes the 32 characters of string.punctuation (ASCII only).
// remove_articles re.sub(r'\b(a|an|the)\b', ' ', ...) with Unicode \w (str.isalnum() or '_'):
//                 since the alternatives are words, it replaces exactly the maximal \w runs that
//                 equal "a", "an" or "the" by one space.
// white_space_fix ' '.join(text.split()) with CPython's whitespace set.
// Property tables come from ICU; CPython 3.11 ships Unicode 14 and ICU 72 Unicode 15, so the two
// may differ on characters first assigned in Unicode 15 (the differential test excludes them).

#include <unicode/uchar.h>

#include <string>
#include <string_view>
#include <vector>

#include "metrics/normalize.h"
#include "metrics/utf8.h"

namespace plumb::metrics {

namespace {

// string.punctuation: !"#$%&'()*+,-./:;<=>?@[\]^_`{|}~
bool IsAsciiPunctuation(char32_t c) {
  return (c >= 0x21 && c <= 0x2F) || (c >= 0x3A && c <= 0x40) || (c >= 0x5B && c <= 0x60) ||
         (c >= 0x7B && c <= 0x7E);
}

// CPython's _Py_ascii_whitespace: \t \n \v \f \r, the four information separators, space.
bool IsAsciiSpace(char32_t c) { return (c >= 0x09 && c <= 0x0D) || (c >= 0x1C && c <= 0x20); }

bool IsAsciiWord(char32_t c) {
  return (c >= '0' && c <= '9') || (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_';
}

// Py_UNICODE_ISSPACE: makeunicodedata.py marks bidirectional class WS, B or S, or category Zs.
bool IsPythonSpace(char32_t c) {
  if (c < 0x80) return IsAsciiSpace(c);
  if (u_charType(static_cast<UChar32>(c)) == U_SPACE_SEPARATOR) return true;
  const UCharDirection dir = u_charDirection(static_cast<UChar32>(c));
  return dir == U_WHITE_SPACE_NEUTRAL || dir == U_BLOCK_SEPARATOR || dir == U_SEGMENT_SEPARATOR;
}

// sre's Unicode \w: Py_UNICODE_ISALNUM (category L*, or any numeric value, Unihan included)
// or '_'. Combining marks are not word characters.
bool IsPythonWord(char32_t c) {
  if (c < 0x80) return IsAsciiWord(c);
  const UChar32 u = static_cast<UChar32>(c);
  return u_isalpha(u) || u_getIntPropertyValue(u, UCHAR_NUMERIC_TYPE) != U_NT_NONE;
}

// CPython's handle_capital_sigma: final form when preceded by a cased letter and not followed
// by one, case-ignorable characters skipped on both sides.
char32_t LowerCapitalSigma(const std::u32string& s, size_t i) {
  auto ignorable = [](char32_t c) {
    return u_hasBinaryProperty(static_cast<UChar32>(c), UCHAR_CASE_IGNORABLE) != 0;
  };
  auto cased = [](char32_t c) {
    return u_hasBinaryProperty(static_cast<UChar32>(c), UCHAR_CASED) != 0;
  };
  size_t j = i;
  while (j > 0 && ignorable(s[j - 1])) --j;
  if (j == 0 || !cased(s[j - 1])) return 0x03C3;
  size_t k = i + 1;
  while (k < s.size() && ignorable(s[k])) ++k;
  return (k == s.size() || !cased(s[k])) ? 0x03C2 : 0x03C3;
}

bool IsArticle(std::string_view word) { return word == "a" || word == "an" || word == "the"; }

// Splits the lowered, punctuation-free text into tokens while removing articles. Fed one
// character at a time with its classes; a finished \w run equal to an article acts as a space.
class SquadTokenizer {
 public:
  void Feed(char32_t c, bool is_word, bool is_space) {
    if (is_space) {
      EndWord();
      EndToken();
      return;
    }
    if (is_word) {
      if (!in_word_) {
        in_word_ = true;
        word_start_ = token_.size();
      }
    } else {
      EndWord();
    }
    AppendUtf8(c, &token_);
  }

  std::vector<std::string> Finish() {
    EndWord();
    EndToken();
    return std::move(tokens_);
  }

 private:
  void EndWord() {
    if (!in_word_) return;
    in_word_ = false;
    if (IsArticle(std::string_view(token_).substr(word_start_))) {
      token_.resize(word_start_);
      EndToken();
    }
  }

  void EndToken() {
    if (token_.empty()) return;
    tokens_.push_back(std::move(token_));
    token_.clear();
  }

  std::vector<std::string> tokens_;
  std::string token_;
  size_t word_start_ = 0;
  bool in_word_ = false;
};

bool IsAscii(std::string_view text) {
  for (char ch : text) {
    if (static_cast<unsigned char>(ch) >= 0x80) return false;
  }
  return true;
}

// The same steps for all-ASCII text, where lowering is byte to byte: one pass lowers and drops
// punctuation, a second splits on whitespace and cuts articles out of each piece.
std::vector<std::string> NormalizeAscii(std::string_view text) {
  // Answers are short; a stack buffer spares the allocation for the common case.
  char stack_buffer[256];
  std::string heap_buffer;
  char* buffer = stack_buffer;
  if (text.size() > sizeof stack_buffer) {
    heap_buffer.resize(text.size());
    buffer = heap_buffer.data();
  }
  size_t n = 0;
  for (char ch : text) {
    char c = ch;
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c + ('a' - 'A'));
    if (IsAsciiPunctuation(static_cast<unsigned char>(c))) continue;
    buffer[n++] = c;
  }
  const std::string_view s(buffer, n);
  std::vector<std::string> tokens;
  tokens.reserve(n / 4 + 1);
  auto emit = [&tokens, s](size_t begin, size_t end) {
    if (begin < end) tokens.emplace_back(s.substr(begin, end - begin));
  };
  size_t i = 0;
  while (i < n) {
    while (i < n && IsAsciiSpace(static_cast<unsigned char>(s[i]))) ++i;
    size_t piece = i;
    while (i < n && !IsAsciiSpace(static_cast<unsigned char>(s[i]))) {
      if (!IsAsciiWord(static_cast<unsigned char>(s[i]))) {
        ++i;
        continue;
      }
      const size_t word = i;
      while (i < n && IsAsciiWord(static_cast<unsigned char>(s[i]))) ++i;
      if (IsArticle(s.substr(word, i - word))) {
        emit(piece, word);
        piece = i;
      }
    }
    emit(piece, i);
  }
  return tokens;
}

}  // namespace

std::vector<std::string> NormalizeSquadTokens(std::string_view text) {
  if (IsAscii(text)) return NormalizeAscii(text);
  const std::u32string s = DecodeUtf8(text);
  SquadTokenizer tokenizer;
  auto feed = [&tokenizer](char32_t c) {
    if (IsAsciiPunctuation(c)) return;
    tokenizer.Feed(c, IsPythonWord(c), IsPythonSpace(c));
  };
  for (size_t i = 0; i < s.size(); ++i) {
    const char32_t c = s[i];
    if (c == 0x0130) {  // the only unconditional full lowercase mapping in SpecialCasing.txt
      feed(U'i');
      feed(0x0307);
    } else if (c == 0x03A3) {
      feed(LowerCapitalSigma(s, i));
    } else {
      feed(static_cast<char32_t>(u_tolower(static_cast<UChar32>(c))));
    }
  }
  return tokenizer.Finish();
}

std::string NormalizeSquad(std::string_view text) {
  std::string out;
  for (const std::string& token : NormalizeSquadTokens(text)) {
    if (!out.empty()) out.push_back(' ');
    out += token;
  }
  return out;
}

}  // namespace plumb::metrics
