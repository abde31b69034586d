// Fuzz target: one line of a JSONL include (SPEC §4), read by the suite loader's one-pass
// JSON reader (runner/suite/jsonl_reader.h) and its plain-shape reader
// (runner/suite/plain_case_line.h). Contracts checked: ReadJsonLine never crashes; a line it reads
// is one nlohmann accepts; a refusal names line 1 and a column within the line; a line the plain
// reader takes is one ReadJsonLine reads too, with the same id and question.
#include <cstddef>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

#include "runner/suite/jsonl_reader.h"
#include "runner/suite/plain_case_line.h"
#include "runner/suite/source_node.h"
#include "runner/suite/suite.h"
#include "tests/fuzz/fuzz_check.h"

namespace {

const plumb::SourceNode* Member(const plumb::SourceNode& object, std::string_view key) {
  for (const plumb::SourceEntry& entry : object.entries) {
    if (entry.key.scalar == key) return &entry.value;
  }
  return nullptr;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string_view line(reinterpret_cast<const char*>(data), size);
  plumb::SourceNode root;
  plumb::Diagnostic error;
  const bool read = plumb::ReadJsonLine(line, "fuzz.jsonl", 1, &root, &error);
  if (read) {
    FUZZ_CHECK(nlohmann::json::accept(line), "ReadJsonLine read a line nlohmann refuses");
  } else {
    FUZZ_CHECK(error.pos.line == 1 && error.pos.column >= 1 &&
                   static_cast<size_t>(error.pos.column) <= line.size() + 1,
               "a refusal must point into the line");
    FUZZ_CHECK(!error.message.empty(), "a refusal must say what is wrong");
  }

  plumb::Case gold;
  plumb::PlainCaseColumns columns;
  if (plumb::ReadPlainCaseLine(line, &gold, &columns)) {
    FUZZ_CHECK(read && root.IsMapping(), "the plain reader took a line ReadJsonLine refuses");
    const plumb::SourceNode* id = Member(root, "id");
    const plumb::SourceNode* question = Member(root, "question");
    FUZZ_CHECK(id != nullptr && id->scalar == gold.id, "the plain reader's id differs");
    FUZZ_CHECK(question != nullptr && question->scalar == gold.question,
               "the plain reader's question differs");
  }
  return 0;
}
