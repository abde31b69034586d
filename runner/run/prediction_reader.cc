#include "runner/run/prediction_reader.h"

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <memory>

#include "runner/base/parallel_chunks.h"
#include "runner/pipeline/flat_reply.h"
#include "runner/pipeline/reply_mapping.h"
#include "runner/run/case_record.h"

namespace plumb {
namespace {

// A recorded reply to a session's turn: the request names the session and turn; the history
// the pipeline saw is not known, so the request carries none.
SessionTurn RecordedTurn(const Case& c) {
  SessionTurn turn;
  turn.session = c.session;
  turn.turn = c.turn;
  turn.history = nlohmann::json();
  return turn;
}

// Repeats are numbered from 0; a bound keeps the (case, repeat) key unambiguous.
constexpr int64_t kMaxRepeat = (1 << 20) - 1;
// The file is read this many bytes at a time (a longer line is read whole).
constexpr size_t kBlockBytes = 256 << 10;
// A thread's share of a block is at least this many lines, or this many bytes of long lines:
// below that, scoring on one thread is quicker than starting another.
constexpr size_t kLinesPerChunk = 1000;
constexpr size_t kBytesPerChunk = 64 << 10;
// A journal record is the reply twice (as given and as read) and about this much besides.
constexpr size_t kRecordBytes = 512;

bool IsBlank(std::string_view line) {
  return line.find_first_not_of(" \t\r") == std::string_view::npos;
}

struct FileCloser {
  void operator()(std::FILE* f) const { std::fclose(f); }
};

}  // namespace

PredictionReader::PredictionReader(const std::string& path, const PreparedSuite& prepared,
                                   RunJournal* journal)
    : path_(path),
      prepared_(prepared),
      journal_(journal),
      seen_first_(prepared.suite.cases.size(), false),
      chunks_(static_cast<size_t>(WorkerCount())) {}

bool PredictionReader::ReadAll(std::vector<CaseOutcome>* outcomes, int* max_repeat,
                               std::string* error) {
  std::unique_ptr<std::FILE, FileCloser> file(std::fopen(path_.c_str(), "rb"));
  if (file == nullptr) {
    *error = "cannot read predictions file " + path_ + ": " + std::strerror(errno);
    return false;
  }
  // The unread rest of the last block, then the next block. Not zero-filled: only the bytes
  // read are ever touched, so a small file costs no more memory than its size.
  size_t capacity = kBlockBytes;
  std::unique_ptr<char[]> buffer(new char[capacity]);
  size_t size = 0;
  std::vector<Line> lines;
  int line_number = 0;
  for (bool at_end = false; !at_end;) {
    if (size == capacity) {  // a line longer than the buffer: read on into a larger one
      std::unique_ptr<char[]> larger(new char[2 * capacity]);
      std::memcpy(larger.get(), buffer.get(), size);
      buffer = std::move(larger);
      capacity *= 2;
    }
    const size_t wanted = capacity - size;
    const size_t got = std::fread(buffer.get() + size, 1, wanted, file.get());
    size += got;
    if (got < wanted) {
      if (std::ferror(file.get())) {
        *error = "cannot read predictions file " + path_ + ": " + std::strerror(errno);
        return false;
      }
      at_end = true;
    }
    // Whole lines only, until the end of the file.
    const std::string_view data(buffer.get(), size);
    const size_t last_newline = data.rfind('\n');
    const size_t complete =
        at_end ? size : (last_newline == std::string_view::npos ? 0 : last_newline + 1);
    if (complete == 0 && !at_end) continue;
    lines.clear();
    for (size_t start = 0; start < complete;) {
      size_t end = data.find('\n', start);
      if (end == std::string_view::npos || end > complete) end = complete;
      const std::string_view text = data.substr(start, end - start);
      ++line_number;
      if (!IsBlank(text)) lines.push_back({text, line_number});
      start = end + 1;
    }
    if (!ScoreBlock(lines, outcomes, max_repeat, error)) return false;
    std::memmove(buffer.get(), buffer.get() + complete, size - complete);
    size -= complete;
  }
  if (problems_ > 0) {
    *error = std::to_string(problems_) + " problem" + (problems_ == 1 ? "" : "s") + " in " + path_ +
             "; nothing was scored";
    return false;
  }
  // A case with no reply at all is one errored item, so it counts against the run.
  for (size_t i = 0; i < prepared_.suite.cases.size(); ++i) {
    if (!seen_first_[i] && !RecordMissing(i, outcomes, error)) return false;
  }
  return true;
}

bool PredictionReader::ScoreBlock(const std::vector<Line>& lines,
                                  std::vector<CaseOutcome>* outcomes, int* max_repeat,
                                  std::string* error) {
  if (lines.empty()) return true;
  const size_t bytes = static_cast<size_t>(lines.back().text.end() - lines.front().text.begin());
  const size_t line_bytes = std::max<size_t>(bytes / lines.size(), 1);
  const size_t min_chunk = std::clamp<size_t>(kBytesPerChunk / line_bytes, 1, kLinesPerChunk);
  const size_t used =
      ForEachChunk(lines.size(), min_chunk, [&](size_t chunk, size_t begin, size_t end) {
        ScoreChunk(lines, begin, end, &chunks_[chunk]);
      });
  for (size_t i = 0; i < used; ++i) {
    if (!Merge(chunks_[i], outcomes, max_repeat, error)) return false;
  }
  return true;
}

void PredictionReader::ScoreChunk(const std::vector<Line>& lines, size_t begin, size_t end,
                                  Chunk* chunk) const {
  chunk->results.clear();
  chunk->results.reserve(end - begin);
  chunk->journal.Clear();
  const size_t bytes = static_cast<size_t>(lines[end - 1].text.end() - lines[begin].text.begin());
  chunk->journal.Reserve(2 * bytes + kRecordBytes * (end - begin));
  size_t next_index = 0;  // predictions usually follow the suite's order: try this case first
  for (size_t i = begin; i < end; ++i) {
    const Line& line = lines[i];
    LineResult& result = chunk->results.emplace_back();
    result.line_number = line.number;
    LineRead read = ReadFlat(line, chunk, &next_index, &result);
    if (read == LineRead::kDeclined) read = ReadGeneral(line, chunk, &next_index, &result);
    if (read == LineRead::kRecord) result.kind = LineResult::Kind::kScored;
  }
}

bool PredictionReader::FindCase(std::string_view id, size_t* next_index, LineResult* result) const {
  const std::vector<Case>& cases = prepared_.suite.cases;
  if (*next_index < cases.size() && cases[*next_index].id == id) {
    result->case_index = *next_index;
  } else if (const size_t known = prepared_.suite.case_ids.Find(cases, id);
             known != CaseIdIndex::kAbsent) {
    result->case_index = known;
  } else {
    result->kind = LineResult::Kind::kUnknownCase;
    result->message = std::string(id);
    return false;
  }
  *next_index = result->case_index + 1;
  return true;
}

PredictionReader::LineRead PredictionReader::ReadFlat(const Line& line, Chunk* chunk,
                                                      size_t* next_index,
                                                      LineResult* result) const {
  FlatPrediction prediction;
  if (line.text.size() > kMaxRecordedBody ||
      !ReadFlatPrediction(line.text, kMaxRepeat, &chunk->flat, &prediction)) {
    return LineRead::kDeclined;
  }
  result->repeat = prediction.repeat;
  if (!FindCase(prediction.id, next_index, result)) return LineRead::kNoRecord;
  // The record MakeCaseRecord would give for this reply (from a pipeline without secrets or a
  // reply map), written straight into the journal: the request from the case, the response
  // from the flat reply, the rest from a record holding only what follows them.
  const Case& c = prepared_.suite.cases[result->case_index];
  CaseRecord record;
  record.repeat = prediction.repeat;
  record.latency_ms = prediction.latency_ms;
  record.parsed = std::move(prediction.parsed);
  record.scores = prepared_.scorer->Score(result->case_index, &record.parsed);
  JsonWriter& w = chunk->journal;
  const size_t begin = w.size();
  BeginCaseRecord(c.id, record.repeat, &w);
  w.PlainKey("request");
  const SessionTurn turn = RecordedTurn(c);
  PipelineRequest::WriteRequest(c.id, c.question, c.input, record.repeat, &w,
                                c.turn > 0 ? &turn : nullptr);
  w.PlainKey("response");
  chunk->flat.Write(&w);
  EndCaseRecord(record, &w);
  KeepRecord(begin, std::move(record), chunk, result);
  return LineRead::kRecord;
}

void PredictionReader::KeepRecord(size_t begin, CaseRecord&& record, Chunk* chunk,
                                  LineResult* result) {
  chunk->journal.EndLine();
  result->journal_begin = begin;
  result->journal_end = chunk->journal.size();
  result->outcome = OutcomeOf(std::move(record), result->case_index);
}

PredictionReader::LineRead PredictionReader::ReadGeneral(const Line& line, Chunk* chunk,
                                                         size_t* next_index,
                                                         LineResult* result) const {
  nlohmann::json json;
  try {
    json = nlohmann::json::parse(line.text);
  } catch (const nlohmann::json::parse_error& e) {
    result->column = static_cast<int>(e.byte);
    result->message =
        std::string("not valid JSON (") + e.what() + "); each line must hold one reply object";
    return LineRead::kNoRecord;
  }
  auto id = json.is_object() ? json.find("id") : json.end();
  if (!json.is_object() || id == json.end() || !id->is_string()) {
    result->message = "a prediction must be a JSON object with a string \"id\" naming its case";
    return LineRead::kNoRecord;
  }
  if (auto it = json.find("repeat"); it != json.end()) {
    if (!it->is_number_integer() || it->get<int64_t>() < 0 || it->get<int64_t>() > kMaxRepeat) {
      result->message = "\"repeat\" must be an integer from 0 to " + std::to_string(kMaxRepeat);
      return LineRead::kNoRecord;
    }
    result->repeat = it->get<int>();
  }
  if (!FindCase(id->get_ref<const std::string&>(), next_index, result)) {
    return LineRead::kNoRecord;
  }
  CallResult call;
  if (auto it = json.find("latency_ms"); it != json.end() && it->is_number()) {
    call.latency_ms = it->get<double>();
  }
  call.body = std::string(line.text);
  const Case& c = prepared_.suite.cases[result->case_index];
  const SessionTurn turn = RecordedTurn(c);
  CaseRecord record =
      MakeCaseRecord(c, result->repeat, call, recorded_, ProtocolReplyMapping(), *prepared_.scorer,
                     result->case_index, &json, c.turn > 0 ? &turn : nullptr);
  const size_t begin = chunk->journal.size();
  WriteCaseRecord(record, &chunk->journal);
  KeepRecord(begin, std::move(record), chunk, result);
  return LineRead::kRecord;
}

bool PredictionReader::Merge(Chunk& chunk, std::vector<CaseOutcome>* outcomes, int* max_repeat,
                             std::string* error) {
  const std::vector<Case>& cases = prepared_.suite.cases;
  const std::string_view journal = chunk.journal.text();
  // Records kept one after another go to the journal together.
  size_t run_begin = 0, run_end = 0;
  auto flush = [&] {
    const bool written =
        run_end == run_begin ||
        journal_->AppendLines(journal.substr(run_begin, run_end - run_begin), error);
    run_begin = run_end = 0;
    return written;
  };
  for (LineResult& result : chunk.results) {
    switch (result.kind) {
      case LineResult::Kind::kProblem:
        Problem(result.line_number, result.column, result.message);
        continue;
      case LineResult::Kind::kUnknownCase:
        std::fprintf(stderr,
                     "%s:%d: warning: prediction for '%s', which the suite does not have; "
                     "ignored\n",
                     path_.c_str(), result.line_number, result.message.c_str());
        continue;
      case LineResult::Kind::kScored:
        break;
    }
    if (!MarkSeen(result.case_index, result.repeat)) {
      Problem(result.line_number, 1,
              "a second prediction for case '" + cases[result.case_index].id + "' repeat " +
                  std::to_string(result.repeat) + "; keep one line per case and repeat");
      continue;
    }
    *max_repeat = std::max(*max_repeat, result.repeat);
    if (problems_ > 0) continue;  // nothing will be kept; only look for more problems
    if (result.journal_begin != run_end && !flush()) return false;
    if (run_end == run_begin) run_begin = result.journal_begin;
    run_end = result.journal_end;
    outcomes->push_back(std::move(result.outcome));
  }
  return problems_ > 0 || flush();
}

bool PredictionReader::MarkSeen(size_t case_index, int repeat) {
  if (repeat > 0) return seen_later_.insert(Key(case_index, repeat)).second;
  if (seen_first_[case_index]) return false;
  seen_first_[case_index] = true;
  return true;
}

void PredictionReader::Problem(int line_number, int column, const std::string& message) {
  std::fprintf(stderr, "%s:%d:%d: error: %s\n", path_.c_str(), line_number, column,
               message.c_str());
  ++problems_;
}

bool PredictionReader::RecordMissing(size_t case_index, std::vector<CaseOutcome>* outcomes,
                                     std::string* error) {
  CallResult call;
  call.error = "no prediction for this case in " + path_;
  const Case& c = prepared_.suite.cases[case_index];
  const SessionTurn turn = RecordedTurn(c);
  const CaseRecord record =
      MakeCaseRecord(c, 0, call, recorded_, ProtocolReplyMapping(), *prepared_.scorer, case_index,
                     nullptr, c.turn > 0 ? &turn : nullptr);
  if (!journal_->AppendLine(CaseRecordLine(record), error)) return false;
  outcomes->push_back(OutcomeOf(record, case_index));
  return true;
}

}  // namespace plumb
