#include "runner/suite/plain_case_line.h"

#include <string>
#include <utility>
#include <vector>

#include "runner/base/json_cursor.h"
#include "runner/base/json_string.h"

namespace plumb {
namespace {

class PlainCaseScanner : JsonCursor {
 public:
  explicit PlainCaseScanner(std::string_view text) : JsonCursor(text) {}

  bool Read(Case* gold, PlainCaseColumns* columns) {
    SkipSpace();
    columns->object = Column();
    if (!Take('{')) return false;
    bool id = false, question = false, answers = false, tags = false;
    std::string_view key;
    do {
      SkipSpace();
      if (!Key(&key)) return false;
      SkipSpace();
      if (!Take(':')) return false;
      SkipSpace();
      if (key == "id" && !id) {
        id = true;
        columns->id = Column();
        if (!String(&gold->id)) return false;
      } else if (key == "question" && !question) {
        question = true;
        if (!String(&gold->question)) return false;
      } else if (key == "answers" && !answers) {
        answers = true;
        if (!StringArray(&gold->answers)) return false;
      } else if (key == "tags" && !tags) {
        tags = true;
        if (!StringArray(&gold->tags)) return false;
      } else {
        return false;  // another key, or one given twice
      }
      SkipSpace();
    } while (Take(','));
    if (!Take('}')) return false;
    SkipSpace();
    return at_ == text_.size() && id && question && answers;
  }

 private:
  // A member name. One of the plain names has no escapes and no multi-byte characters, so
  // only such a name is read here; any other (escaped, or not ASCII) declines the line.
  bool Key(std::string_view* key) {
    if (!Take('"')) return false;
    const size_t start = at_;
    while (at_ < text_.size() && text_[at_] != '"') {
      const unsigned char c = static_cast<unsigned char>(text_[at_]);
      if (c == '\\' || c < 0x20 || c >= 0x80) return false;
      ++at_;
    }
    if (at_ == text_.size()) return false;
    *key = text_.substr(start, at_ - start);
    ++at_;
    return true;
  }

  bool String(std::string* out) {
    if (at_ >= text_.size() || text_[at_] != '"') return false;
    return ReadJsonString(text_, &at_, out, &continuation_bytes_);
  }

  // Read into a scratch list first (one per thread, kept from line to line), so the case's own
  // list is allocated once, at its size.
  bool StringArray(std::vector<std::string>* out) {
    thread_local std::vector<std::string> items;
    if (!Take('[')) return false;
    SkipSpace();
    if (Take(']')) return true;
    size_t count = 0;
    do {
      SkipSpace();
      if (count == items.size()) items.emplace_back();
      std::string& item = items[count++];
      item.clear();
      if (!String(&item)) return false;
      SkipSpace();
    } while (Take(','));
    if (!Take(']')) return false;
    out->reserve(count);
    for (size_t i = 0; i < count; ++i) out->push_back(std::move(items[i]));
    return true;
  }
};

}  // namespace

bool ReadPlainCaseLine(std::string_view line, Case* gold, PlainCaseColumns* columns) {
  PlainCaseScanner scanner(line);
  return scanner.Read(gold, columns);
}

}  // namespace plumb
