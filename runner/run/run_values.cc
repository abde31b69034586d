#include "runner/run/run_values.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <limits>
#include <optional>
#include <string_view>
#include <unordered_map>

#include "runner/base/json_cursor.h"
#include "runner/base/json_string.h"
#include "runner/run/failure_cause.h"

namespace plumb {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr int kMaxDepth = 256;  // deeper nesting is left to LoadRun

/// Reads the members LoadRunValues uses and steps over the rest. Every method returns false
/// where the text is not what it expects; the caller then declines the whole file.
class QuickScanner : public JsonCursor {
 public:
  explicit QuickScanner(std::string_view text) : JsonCursor(text) {}

  size_t at() const { return at_; }
  using JsonCursor::SkipSpace;
  bool AtEnd() {
    SkipSpace();
    return at_ == text_.size();
  }
  bool Peek(char c) {
    SkipSpace();
    return at_ < text_.size() && text_[at_] == c;
  }
  bool Expect(char c) {
    SkipSpace();
    return Take(c);
  }

  /// A string, decoded and checked as nlohmann reads it.
  bool String(std::string* out) {
    SkipSpace();
    out->clear();
    return at_ < text_.size() && text_[at_] == '"' && ReadJsonString(text_, &at_, out, nullptr);
  }

  /// `{` then, member by member, the key into *key (false at `}`); `first` tracks the comma.
  bool NextKey(bool* first, std::string* key) {
    SkipSpace();
    if (Take('}')) {
      key->clear();
      done_ = true;
      return true;
    }
    if (!*first && !Take(',')) return false;
    *first = false;
    done_ = false;
    return String(key) && Expect(':');
  }
  bool ObjectDone() const { return done_; }

  /// A JSON number as std::from_chars reads it: correctly rounded, as nlohmann's reading
  /// (strtod for a fraction or exponent, an exact integer converted to double otherwise).
  bool Number(double* out) {
    SkipSpace();
    const size_t start = at_;
    if (!SkipNumber()) return false;
    return std::from_chars(text_.data() + start, text_.data() + at_, *out).ec == std::errc();
  }
  /// An integer literal (no fraction, no exponent) that fits an int.
  bool Integer(int* out) {
    SkipSpace();
    const size_t start = at_;
    Take('-');
    if (TakeDigits() == 0) return false;
    if (at_ < text_.size() && (text_[at_] == '.' || text_[at_] == 'e' || text_[at_] == 'E')) {
      return false;
    }
    const auto result = std::from_chars(text_.data() + start, text_.data() + at_, *out);
    return result.ec == std::errc() && result.ptr == text_.data() + at_;
  }
  bool Bool(bool* out) {
    SkipSpace();
    if (TakeWord("true")) {
      *out = true;
      return true;
    }
    *out = false;
    return TakeWord("false");
  }
  bool Null() {
    SkipSpace();
    return TakeWord("null");
  }

  /// Steps over one value of any kind. Strings are stepped over by their quotes and escapes
  /// (a control character refuses them; their UTF-8 is not checked).
  bool Skip(int depth = 0) {
    SkipSpace();
    if (at_ >= text_.size() || depth > kMaxDepth) return false;
    const char c = text_[at_];
    if (c == '"') return SkipString();
    if (c == '{' || c == '[') {
      const char close = c == '{' ? '}' : ']';
      ++at_;
      SkipSpace();
      if (Take(close)) return true;
      while (true) {
        if (c == '{') {
          SkipSpace();
          if (!SkipString() || !Expect(':')) return false;
        }
        if (!Skip(depth + 1)) return false;
        SkipSpace();
        if (Take(close)) return true;
        if (!Take(',')) return false;
      }
    }
    if (c == 't') return TakeWord("true");
    if (c == 'f') return TakeWord("false");
    if (c == 'n') return TakeWord("null");
    return SkipNumber();
  }

 private:
  bool SkipString() {
    if (at_ >= text_.size() || text_[at_] != '"') return false;
    ++at_;
    const size_t size = text_.size();
    while (at_ < size) {
      const unsigned char c = static_cast<unsigned char>(text_[at_]);
      if (c == '"') {
        ++at_;
        return true;
      }
      if (c == '\\') {
        at_ += 2;
        continue;
      }
      if (c < 0x20) return false;
      ++at_;
    }
    return false;
  }
  // -?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?  (RFC 8259 §6)
  bool SkipNumber() {
    Take('-');
    const size_t int_start = at_;
    const size_t digits = TakeDigits();
    if (digits == 0 || (digits > 1 && text_[int_start] == '0')) return false;
    if (Take('.') && TakeDigits() == 0) return false;
    if (Take('e') || Take('E')) {
      if (!Take('+')) Take('-');
      if (TakeDigits() == 0) return false;
    }
    return true;
  }

  bool done_ = false;
};

/// Metric ids of one run, interned. Records list their scores in the same (sorted) order, so
/// the id at each position is first compared with the one seen there last.
class MetricInterner {
 public:
  explicit MetricInterner(RunValues* values) : values_(values) {}
  size_t Find(const std::string& metric, size_t position) {
    if (position < cache_.size() && cache_[position].first == metric) {
      return cache_[position].second;
    }
    auto it = index_.find(metric);
    size_t m;
    if (it != index_.end()) {
      m = it->second;
    } else {
      m = values_->metrics.size();
      index_.emplace(metric, m);
      values_->metrics.push_back(metric);
      values_->sums.emplace_back(values_->rows(), 0.0);
      values_->counts.emplace_back(values_->rows(), 0u);
    }
    if (position >= cache_.size()) cache_.resize(position + 1);
    cache_[position] = {metric, m};
    return m;
  }

 private:
  RunValues* values_;
  std::unordered_map<std::string, size_t> index_;
  std::vector<std::pair<std::string, size_t>> cache_;
};

/// Sets up the per-row vectors once ids, gold hashes and tags are known.
void SizeRows(RunValues* values) {
  const size_t rows = values->rows();
  values->repeats.assign(rows, 0);
  values->passes.assign(rows, 0);
  values->latency_sum.assign(rows, 0);
  values->latency_count.assign(rows, 0);
  values->latency_bounds.assign(rows, 0);
  values->ttft_sum.assign(rows, 0);
  values->ttft_count.assign(rows, 0);
  values->input_tokens_sum.assign(rows, 0);
  values->output_tokens_sum.assign(rows, 0);
  values->usage_count.assign(rows, 0);
  values->cost_sum.assign(rows, 0);
  values->cost_count.assign(rows, 0);
  values->first_offset.assign(rows, -1);
  values->first_record.assign(rows, nullptr);
  values->first_failed_offset.assign(rows, -1);
  values->first_failed_record.assign(rows, nullptr);
  values->gold_offset.resize(rows, -1);
  values->gold_length.resize(rows, 0);
  values->gold_record.resize(rows, nullptr);
}

/// A row's tags: the strings of `names` (gold order), interned, each once, by ascending name.
void AddTags(const std::vector<std::string>& names,
             std::unordered_map<std::string, uint32_t>* tag_index, RunValues* values) {
  std::vector<uint32_t> row;
  for (const std::string& name : names) {
    auto it = tag_index->find(name);
    if (it == tag_index->end()) {
      it = tag_index->emplace(name, static_cast<uint32_t>(values->tag_names.size())).first;
      values->tag_names.push_back(name);
    }
    row.push_back(it->second);
  }
  std::sort(row.begin(), row.end(),
            [&](uint32_t a, uint32_t b) { return values->tag_names[a] < values->tag_names[b]; });
  row.erase(std::unique(row.begin(), row.end()), row.end());
  values->tag_ids.insert(values->tag_ids.end(), row.begin(), row.end());
  values->tag_begin.push_back(static_cast<uint32_t>(values->tag_ids.size()));
}

/// What one journal record adds to its row.
struct RecordFields {
  std::string id;
  int repeat = 0;
  double latency_ms = 0;
  bool latency_lower_bound = false;
  bool errored = false;
  bool pass = false;
  std::vector<std::pair<std::string, double>> scores;
  std::optional<double> ttft_ms;
  std::optional<double> cost;
  std::optional<double> input_tokens, output_tokens;
};

void Fold(uint32_t row, const RecordFields& f, MetricInterner* interner, RunValues* values) {
  for (size_t k = 0; k < f.scores.size(); ++k) {
    const size_t m = interner->Find(f.scores[k].first, k);
    values->sums[m][row] += f.scores[k].second;
    values->counts[m][row] += 1;
  }
  values->repeats[row] += 1;
  values->passes[row] += f.pass ? 1 : 0;
  // Latency of a failed call measures the failure, as in the run's own latency summary; a
  // timeout counts, at its timeout, as a lower bound.
  if (!f.errored || f.latency_lower_bound) {
    values->latency_sum[row] += f.latency_ms;
    values->latency_count[row] += 1;
    values->latency_bounds[row] += f.latency_lower_bound ? 1 : 0;
  }
  if (f.errored) return;
  if (f.ttft_ms) {
    values->ttft_sum[row] += *f.ttft_ms;
    values->ttft_count[row] += 1;
  }
  if (f.input_tokens || f.output_tokens) {
    values->input_tokens_sum[row] += f.input_tokens.value_or(0);
    values->output_tokens_sum[row] += f.output_tokens.value_or(0);
    values->usage_count[row] += 1;
  }
  if (f.cost) {
    values->cost_sum[row] += *f.cost;
    values->cost_count[row] += 1;
  }
}

// --- run.json ---------------------------------------------------------------------------------

/// run.json's "cases": per case its gold_hash and tags (the last of repeated keys wins, as in
/// nlohmann); a case listed twice declines.
bool ReadCases(QuickScanner* s, RunValues* values) {
  std::unordered_map<std::string, uint32_t> tag_index;
  std::unordered_map<std::string, uint32_t> seen;
  values->tag_begin.push_back(0);
  if (!s->Peek('{')) return s->Skip();  // not an object: no cases, as LoadRun's reading has it
  s->Expect('{');
  bool first = true;
  std::string id, key, hash, tag;
  std::vector<std::string> tags;
  while (true) {
    if (!s->NextKey(&first, &id)) return false;
    if (s->ObjectDone()) break;
    if (!seen.emplace(id, 0).second) return false;
    hash.clear();
    tags.clear();
    s->SkipSpace();
    const size_t gold_start = s->at();
    if (!s->Peek('{')) {
      if (!s->Skip()) return false;
    } else {
      s->Expect('{');
      bool first_member = true;
      while (true) {
        if (!s->NextKey(&first_member, &key)) return false;
        if (s->ObjectDone()) break;
        if (key == "gold_hash") {
          hash.clear();
          if (s->Peek('"')) {
            if (!s->String(&hash)) return false;
          } else if (!s->Skip()) {
            return false;
          }
        } else if (key == "tags") {
          tags.clear();
          if (!s->Peek('[')) {
            if (!s->Skip()) return false;
            continue;
          }
          s->Expect('[');
          if (s->Peek(']')) {
            s->Expect(']');
            continue;
          }
          while (true) {
            if (s->Peek('"')) {
              if (!s->String(&tag)) return false;
              tags.push_back(tag);
            } else if (!s->Skip()) {
              return false;
            }
            if (s->Expect(']')) break;
            if (!s->Expect(',')) return false;
          }
        } else if (!s->Skip()) {
          return false;
        }
      }
    }
    values->ids.push_back(id);
    values->gold_hashes.push_back(hash);
    values->gold_offset.push_back(static_cast<int64_t>(gold_start));
    values->gold_length.push_back(static_cast<uint32_t>(s->at() - gold_start));
    AddTags(tags, &tag_index, values);
  }
  return true;
}

bool ReadFile(const std::string& path, std::string* out) {
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) return false;
  // Sized once from fstat and read in place: growing the string block by block touched about
  // three times the file's size in fresh pages (run.json of 100,000 cases is ~46 MB).
  struct stat info;
  size_t size = ::fstat(fd, &info) == 0 && info.st_size > 0 ? static_cast<size_t>(info.st_size) : 0;
  out->resize(size + 1);  // one byte more: a file that grew since fstat shows it
  size_t have = 0;
  while (true) {
    if (have == out->size()) out->resize(2 * out->size() + (size_t{1} << 16));
    const ssize_t got = ::read(fd, out->data() + have, out->size() - have);
    if (got < 0) {
      ::close(fd);
      return false;
    }
    if (got == 0) break;
    have += static_cast<size_t>(got);
  }
  out->resize(have);
  ::close(fd);
  return true;
}

bool QuickRecord(const std::string& dir, RunValues* values) {
  std::string text;
  if (!ReadFile(dir + "/run.json", &text)) return false;
  QuickScanner s(text);
  if (!s.Expect('{')) return false;
  values->record = nlohmann::json::object();
  bool first = true, cases = false;
  std::string key;
  while (true) {
    if (!s.NextKey(&first, &key)) return false;
    if (s.ObjectDone()) break;
    if (key == "cases") {
      if (cases || !ReadCases(&s, values)) return false;
      cases = true;
      continue;
    }
    s.SkipSpace();
    const size_t start = s.at();
    if (!s.Skip()) return false;
    nlohmann::json member =
        nlohmann::json::parse(std::string_view(text).substr(start, s.at() - start), nullptr, false);
    if (member.is_discarded()) return false;
    values->record[key] = std::move(member);
  }
  if (!s.AtEnd() || !values->record.contains("plumb_run")) return false;
  if (!cases) values->tag_begin.push_back(0);
  SizeRows(values);
  return true;
}

// --- cases.jsonl ------------------------------------------------------------------------------

/// One journal line into *f, read as CaseRecordFromJson reads those members; false declines it
/// (a repeated member that is read, a member of another type, a required one missing).
bool QuickLine(std::string_view line, RecordFields* f) {
  QuickScanner s(line);
  if (!s.Expect('{')) return false;
  enum Seen {
    kId = 1,
    kRepeat = 2,
    kLatency = 4,
    kError = 8,
    kScores = 16,
    kPass = 32,
    kAnswer = 64,
    kBound = 128,
    kCause = 256,
    kFirstCall = 512,
    kTtft = 1024,
    kCost = 2048,
    kUsage = 4096
  };
  int seen = 0;
  auto once = [&](int bit) {
    if (seen & bit) return false;
    seen |= bit;
    return true;
  };
  f->scores.clear();
  f->pass = false;
  f->errored = false;
  f->latency_lower_bound = false;
  f->ttft_ms.reset();
  f->cost.reset();
  f->input_tokens.reset();
  f->output_tokens.reset();
  bool first = true;
  std::string key, text;
  while (true) {
    if (!s.NextKey(&first, &key)) return false;
    if (s.ObjectDone()) break;
    bool ok = true;
    if (key == "id") {
      ok = once(kId) && s.String(&f->id);
    } else if (key == "repeat") {
      ok = once(kRepeat) && s.Integer(&f->repeat);
    } else if (key == "latency_ms") {
      ok = once(kLatency) && s.Number(&f->latency_ms);
    } else if (key == "pass") {
      ok = once(kPass) && s.Bool(&f->pass);
    } else if (key == "latency_lower_bound") {
      ok = once(kBound) && s.Bool(&f->latency_lower_bound);
    } else if (key == "first_call") {  // not folded; read so that a wrong type declines
      bool first_call;
      ok = once(kFirstCall) && s.Bool(&first_call);
    } else if (key == "ttft_ms") {
      double v;
      ok = once(kTtft) && s.Number(&v);
      f->ttft_ms = v;
    } else if (key == "cost") {
      double v;
      ok = once(kCost) && s.Number(&v);
      f->cost = v;
    } else if (key == "usage") {
      if (!once(kUsage) || !s.Expect('{')) return false;
      bool first_member = true;
      while (true) {
        if (!s.NextKey(&first_member, &text)) return false;
        if (s.ObjectDone()) break;
        double v;
        if (text == "input_tokens" || text == "output_tokens") {
          if (!s.Number(&v)) return false;
          (text == "input_tokens" ? f->input_tokens : f->output_tokens) = v;
        } else if (!s.Skip()) {
          return false;
        }
      }
    } else if (key == "cause") {  // any string: one this plumb does not know is left kNone
      ok = once(kCause) && s.String(&text);
    } else if (key == "answer") {
      ok = once(kAnswer) && s.Skip();
    } else if (key == "error") {
      if (!once(kError)) return false;
      if (s.Peek('n')) {
        ok = s.Null();
      } else {
        if (!s.Expect('{')) return false;
        std::string reason = "error";
        bool first_member = true, has_reason = false;
        while (true) {
          if (!s.NextKey(&first_member, &text)) return false;
          if (s.ObjectDone()) break;
          if (text == "reason") {
            if (has_reason || !s.String(&reason)) return false;
            has_reason = true;
          } else if (!s.Skip()) {
            return false;
          }
        }
        f->errored = !reason.empty();
      }
    } else if (key == "scores") {
      if (!once(kScores) || !s.Expect('{')) return false;
      bool first_member = true;
      while (true) {
        if (!s.NextKey(&first_member, &text)) return false;
        if (s.ObjectDone()) break;
        double value;
        if (!s.Number(&value)) return false;
        f->scores.emplace_back(text, value);
      }
      // MetricValues holds them by id; a repeated id declines.
      std::sort(f->scores.begin(), f->scores.end());
      for (size_t k = 1; k < f->scores.size(); ++k) {
        if (f->scores[k].first == f->scores[k - 1].first) return false;
      }
    } else {
      ok = s.Skip();
    }
    if (!ok) return false;
  }
  const int required = kId | kRepeat | kLatency | kError;
  if ((seen & required) != required || !s.AtEnd()) return false;
  // A record without an error must carry its answer (CaseRecordFromJson reads it).
  return f->errored || (seen & kAnswer) != 0;
}

bool QuickJournal(const std::string& dir, RunValues* values) {
  const std::string path = dir + "/cases.jsonl";
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) return errno == ENOENT;  // no journal: nothing finished, as ReadJournal has it
  ::posix_fadvise(fd, 0, 0, POSIX_FADV_SEQUENTIAL);
  std::unordered_map<std::string_view, uint32_t> row_of;
  row_of.reserve(values->rows());
  for (uint32_t r = 0; r < values->rows(); ++r) row_of.emplace(values->ids[r], r);
  std::vector<int> first_repeat(values->rows(), 0), first_failed_repeat(values->rows(), 0);
  MetricInterner interner(values);
  RecordFields f;
  std::string buffer;
  const size_t block = size_t{4} << 20;
  int64_t buffer_offset = 0;  // file offset of buffer[0]
  bool ok = true;
  while (ok) {
    const size_t kept = buffer.size();
    buffer.resize(kept + block);
    const ssize_t got = ::read(fd, buffer.data() + kept, block);
    if (got < 0) {
      ok = false;
      break;
    }
    buffer.resize(kept + static_cast<size_t>(got));
    if (got == 0) {
      ok = buffer.empty();  // a last line without its newline is torn: LoadRun words it
      break;
    }
    size_t pos = 0;
    while (true) {
      const size_t newline = buffer.find('\n', pos);
      if (newline == std::string::npos) break;
      if (!QuickLine(std::string_view(buffer).substr(pos, newline - pos), &f)) {
        ok = false;
        break;
      }
      auto it = row_of.find(f.id);
      if (it != row_of.end()) {
        const uint32_t row = it->second;
        Fold(row, f, &interner, values);
        const int64_t offset = buffer_offset + static_cast<int64_t>(pos);
        if (values->first_offset[row] < 0 || f.repeat < first_repeat[row]) {
          values->first_offset[row] = offset;
          first_repeat[row] = f.repeat;
        }
        if (!f.pass &&
            (values->first_failed_offset[row] < 0 || f.repeat < first_failed_repeat[row])) {
          values->first_failed_offset[row] = offset;
          first_failed_repeat[row] = f.repeat;
        }
      }
      pos = newline + 1;
    }
    buffer.erase(0, pos);
    buffer_offset += static_cast<int64_t>(pos);
  }
  ::close(fd);
  return ok;
}

}  // namespace

double RunValues::Value(uint32_t row, size_t m) const {
  const uint32_t count = counts[m][row];
  return count > 0 ? sums[m][row] / count : kNaN;
}

namespace {

/// The bytes of `path` from `offset`: `length` of them, or up to the next newline when length
/// is 0. Empty when the file cannot be read there.
std::string ReadAt(const std::string& path, int64_t offset, size_t length) {
  std::string out;
  const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) return out;
  char buffer[1 << 14];
  off_t at = static_cast<off_t>(offset);
  while (true) {
    const size_t want = length > 0 ? std::min(sizeof buffer, length - out.size()) : sizeof buffer;
    if (want == 0) break;
    const ssize_t got = ::pread(fd, buffer, want, at);
    if (got <= 0) break;
    const std::string_view chunk(buffer, static_cast<size_t>(got));
    const size_t newline = length > 0 ? std::string_view::npos : chunk.find('\n');
    out.append(chunk.substr(0, newline));
    if (newline != std::string_view::npos) break;
    at += got;
  }
  ::close(fd);
  return out;
}

bool RecordAt(const RunValues& values, uint32_t row, int64_t offset, CaseRecord* record,
              std::string* error) {
  const std::string path = values.dir + "/cases.jsonl";
  const nlohmann::json json = nlohmann::json::parse(ReadAt(path, offset, 0), nullptr, false);
  std::string record_error;
  if (json.is_discarded() || !CaseRecordFromJson(json, record, &record_error) ||
      record->id != values.ids[row]) {
    *error = path + " changed while it was being read (case " + values.ids[row] +
             "); run the command again";
    return false;
  }
  return true;
}

}  // namespace

bool RunValues::FirstRecord(uint32_t row, CaseRecord* record, std::string* error) const {
  if (first_record[row] != nullptr) {
    *record = *first_record[row];
    return true;
  }
  if (first_offset[row] < 0) {
    *error = dir + "/cases.jsonl has no record of case " + ids[row];
    return false;
  }
  return RecordAt(*this, row, first_offset[row], record, error);
}

bool RunValues::FirstFailedRecord(uint32_t row, CaseRecord* record, std::string* error) const {
  if (first_failed_record[row] != nullptr) {
    *record = *first_failed_record[row];
    return true;
  }
  if (first_failed_offset[row] < 0) {
    *error = dir + "/cases.jsonl has no failed record of case " + ids[row];
    return false;
  }
  if (!RecordAt(*this, row, first_failed_offset[row], record, error)) return false;
  if (!record->scores.pass && record->scores.cause == FailureCause::kNone) {
    // Written before causes were recorded: classified as LoadRun classifies it.
    nlohmann::json gold;
    if (!Gold(row, &gold, error)) return false;
    record->scores.abstention_case = gold.is_object() && gold.contains("answers") &&
                                     gold["answers"].is_array() && gold["answers"].empty();
    record->scores.cause = ClassifyFailure(record->scores, CasePass());
  }
  return true;
}

bool RunValues::Gold(uint32_t row, nlohmann::json* gold, std::string* error) const {
  if (gold_record[row] != nullptr) {
    *gold = *gold_record[row];
    return true;
  }
  *gold = nullptr;
  if (gold_offset[row] < 0) return true;
  const std::string path = dir + "/run.json";
  *gold = nlohmann::json::parse(ReadAt(path, gold_offset[row], gold_length[row]), nullptr, false);
  if (gold->is_discarded()) {
    *error =
        path + " changed while it was being read (case " + ids[row] + "); run the command again";
    return false;
  }
  return true;
}

void RunValuesOf(const LoadedRun& run, RunValues* values) {
  *values = RunValues();
  values->dir = run.dir;
  values->warnings = run.warnings;
  values->record = nlohmann::json::object();
  if (run.record.is_object()) {
    for (auto it = run.record.begin(); it != run.record.end(); ++it) {
      if (it.key() != "cases") values->record[it.key()] = *it;
    }
  }
  std::unordered_map<std::string, uint32_t> tag_index;
  values->tag_begin.push_back(0);
  auto listed = run.record.find("cases");
  if (listed != run.record.end() && listed->is_object()) {
    std::vector<std::string> tags;
    for (auto it = listed->begin(); it != listed->end(); ++it) {
      values->ids.push_back(it.key());
      const nlohmann::json& gold = *it;
      values->gold_record.push_back(&gold);
      std::string hash;
      tags.clear();
      if (gold.is_object()) {
        auto h = gold.find("gold_hash");
        if (h != gold.end() && h->is_string()) hash = h->get<std::string>();
        auto t = gold.find("tags");
        if (t != gold.end() && t->is_array()) {
          for (const nlohmann::json& tag : *t) {
            if (tag.is_string()) tags.push_back(tag.get<std::string>());
          }
        }
      }
      values->gold_hashes.push_back(hash);
      AddTags(tags, &tag_index, values);
    }
  }
  SizeRows(values);
  std::unordered_map<std::string_view, uint32_t> row_of;
  for (uint32_t r = 0; r < values->rows(); ++r) row_of.emplace(values->ids[r], r);
  MetricInterner interner(values);
  RecordFields f;
  for (const CaseRecord& r : run.records) {
    auto it = row_of.find(r.id);
    if (it == row_of.end()) continue;
    const uint32_t row = it->second;
    f.scores.assign(r.scores.values.begin(), r.scores.values.end());
    f.pass = r.scores.pass;
    f.errored = !r.error.empty();
    f.latency_ms = r.latency_ms;
    f.latency_lower_bound = r.latency_lower_bound;
    f.ttft_ms = r.ttft_ms;
    f.cost = r.cost;
    f.input_tokens.reset();
    f.output_tokens.reset();
    if (r.parsed.input_tokens) f.input_tokens = static_cast<double>(*r.parsed.input_tokens);
    if (r.parsed.output_tokens) f.output_tokens = static_cast<double>(*r.parsed.output_tokens);
    Fold(row, f, &interner, values);
    const CaseRecord*& first = values->first_record[row];
    if (first == nullptr || r.repeat < first->repeat) first = &r;
    const CaseRecord*& failed = values->first_failed_record[row];
    if (!r.scores.pass && (failed == nullptr || r.repeat < failed->repeat)) failed = &r;
  }
}

bool LoadRunValues(const std::string& dir, RunValues* values, std::string* error) {
  *values = RunValues();
  values->dir = dir;
  if (QuickRecord(dir, values) && QuickJournal(dir, values)) return true;
  auto run = std::make_shared<LoadedRun>();
  if (!LoadRun(dir, run.get(), error)) return false;
  RunValuesOf(*run, values);
  values->loaded = std::move(run);
  return true;
}

}  // namespace plumb
