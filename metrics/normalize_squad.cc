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
// Text whose bytes are all below 0x80 takes a one-pass, table-driven path (TokenizeAscii) with
// the same result and no allocation; any other text is decoded to code points first.

#include <unicode/uchar.h>

#include <string>
#include <string_view>
#include <vector>

#include "metrics/normalize.h"
#include "metrics/utf8.h"

namespace plumb::metrics {

namespace {

// string.punctuation: !"#$%&'()*+,-./:;<=>?@[\]^_`{|}~
constexpr bool IsAsciiPunctuation(char32_t c) {
  return (c >= 0x21 && c <= 0x2F) || (c >= 0x3A && c <= 0x40) || (c >= 0x5B && c <= 0x60) ||
         (c >= 0x7B && c <= 0x7E);
}

// CPython's _Py_ascii_whitespace: \t \n \v \f \r, the four information separators, space.
constexpr bool IsAsciiSpace(char32_t c) {
  return (c >= 0x09 && c <= 0x0D) || (c >= 0x1C && c <= 0x20);
}

constexpr bool IsAsciiWord(char32_t c) {
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

// What each byte is to the four steps, in one table: a \w character maps to its lowercase form
// (all >= '0'; '_' is punctuation and already gone), anything else to a code below '0':
// deleted by remove_punc, whitespace for split(), kept but neither \w nor whitespace (the
// control characters 0x00..0x08, 0x0E..0x1B and 0x7F), or not ASCII at all.
enum : unsigned char { kPunctuation, kSpace, kOther, kNotAscii, kFirstWordByte = '0' };

struct AsciiTable {
  unsigned char code[256];
};

constexpr AsciiTable MakeAsciiTable() {
  AsciiTable table{};
  for (int c = 0; c < 256; ++c) {
    const char32_t cp = static_cast<char32_t>(c);
    unsigned char code = kNotAscii;
    if (c >= 0x80) {
    } else if (IsAsciiPunctuation(cp)) {
      code = kPunctuation;
    } else if (IsAsciiSpace(cp)) {
      code = kSpace;
    } else if (IsAsciiWord(cp)) {
      code = static_cast<unsigned char>(c >= 'A' && c <= 'Z' ? c + ('a' - 'A') : c);
    } else {
      code = kOther;
    }
    table.code[c] = code;
  }
  return table;
}

constexpr AsciiTable kAscii = MakeAsciiTable();

bool IsArticle(const char* word, size_t size) {
  switch (size) {
    case 1:
      return word[0] == 'a';
    case 2:
      return word[0] == 'a' && word[1] == 'n';
    case 3:
      return word[0] == 't' && word[1] == 'h' && word[2] == 'e';
    default:
      return false;
  }
}

// The four steps in one pass over all-ASCII text, where lowering is byte to byte: punctuation
// is skipped (so it glues its neighbours before articles are looked for), letters are lowered,
// a finished \w run equal to an article is cut out of its token as the regex's ' ' would, and
// whitespace ends the token. Returns false, with `out` unspecified, at the first byte >= 0x80:
// the whole text then takes the general path, since a non-ASCII neighbour can change what is a
// word boundary or whitespace.
bool TokenizeAscii(std::string_view text, TokenViews* out) {
  // Output is never longer than the input, and tokens are separated by at least one byte.
  char* chars = nullptr;
  TokenViews::Span* spans = nullptr;
  out->Reset(text.size(), text.size() / 2 + 1, &chars, &spans);
  size_t count = 0;  // tokens appended
  size_t n = 0;      // bytes written
  size_t token = 0;  // where the current token starts in chars
  auto end_token = [&](size_t end) {
    if (end > token) spans[count++] = TokenViews::Span{token, end - token};
  };
  const unsigned char* p = reinterpret_cast<const unsigned char*>(text.data());
  const unsigned char* const end = p + text.size();
  while (p < end) {
    unsigned char code = kAscii.code[*p];
    if (code >= kFirstWordByte) {
      // A \w run; punctuation inside it is deleted, so "t.he" is the article "the".
      const size_t word = n;
      do {
        if (code != kPunctuation) chars[n++] = static_cast<char>(code);
        if (++p == end) break;
        code = kAscii.code[*p];
      } while (code >= kFirstWordByte || code == kPunctuation);
      if (IsArticle(chars + word, n - word)) {
        end_token(word);
        n = word;
        token = n;
      }
      continue;
    }
    switch (code) {
      case kPunctuation:
        break;
      case kSpace:
        end_token(n);
        token = n;
        break;
      case kOther:
        chars[n++] = static_cast<char>(*p);
        break;
      default:  // kNotAscii
        return false;
    }
    ++p;
  }
  end_token(n);
  out->SetSize(count);
  return true;
}

std::vector<std::string> NormalizeGeneral(std::string_view text) {
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

}  // namespace

std::vector<std::string> NormalizeSquadTokens(std::string_view text) {
  TokenViews views;
  if (!TokenizeAscii(text, &views)) return NormalizeGeneral(text);
  std::vector<std::string> tokens;
  tokens.reserve(views.size());
  for (size_t i = 0; i < views.size(); ++i) tokens.emplace_back(views[i]);
  return tokens;
}

void NormalizeSquadTokens(std::string_view text, TokenViews* out) {
  if (!TokenizeAscii(text, out)) out->Assign(NormalizeGeneral(text));
}

std::string NormalizeSquad(std::string_view text) {
  TokenViews tokens;
  NormalizeSquadTokens(text, &tokens);
  std::string out;
  for (size_t i = 0; i < tokens.size(); ++i) {
    if (i > 0) out.push_back(' ');
    out += tokens[i];
  }
  return out;
}

}  // namespace plumb::metrics
