// The run journal survives the faults it is built for: a torn last line after a crash, and a
// resume that must not append to the torn bytes (the LevelDB log's lesson: detect the torn
// tail and drop it, never misread it).
#include "runner/run/run_journal.h"

#include <unistd.h>

#include <catch2/catch.hpp>
#include <cstdio>
#include <fstream>
#include <sstream>

#include "runner/run/case_record.h"

namespace {

std::string TempPath(const char* name) {
  return std::string("/tmp/plumb_journal_test_") + std::to_string(getpid()) + "_" + name;
}

std::string ReadAll(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace

TEST_CASE("records are appended one line each and read back in order") {
  const std::string path = TempPath("append");
  std::string error;
  {
    auto journal = plumb::RunJournal::Open(path, -1, &error);
    REQUIRE(journal);
    REQUIRE(journal->AppendLine(R"({"id":"a","repeat":0})", &error));
    REQUIRE(journal->AppendLine(R"({"id":"b","repeat":0})", &error));
  }
  CHECK(ReadAll(path) == "{\"id\":\"a\",\"repeat\":0}\n{\"id\":\"b\",\"repeat\":0}\n");
  plumb::JournalContents contents;
  REQUIRE(plumb::ReadJournal(path, &contents, &error));
  REQUIRE(contents.records.size() == 2);
  CHECK(contents.records[1]["id"] == "b");
  CHECK(contents.warnings.empty());
  std::remove(path.c_str());
}

TEST_CASE("a torn last line is dropped with a warning and cut away on reopen") {
  const std::string path = TempPath("torn");
  {
    std::ofstream out(path, std::ios::binary);
    out << "{\"id\":\"a\",\"repeat\":0}\n{\"id\":\"b\",\"rep";  // crash mid-write
  }
  plumb::JournalContents contents;
  std::string error;
  REQUIRE(plumb::ReadJournal(path, &contents, &error));
  REQUIRE(contents.records.size() == 1);
  CHECK(contents.valid_bytes == 22);
  REQUIRE(contents.warnings.size() == 1);
  CHECK(contents.warnings[0].find(":2: the last line is incomplete") != std::string::npos);
  {
    auto journal = plumb::RunJournal::Open(path, contents.valid_bytes, &error);
    REQUIRE(journal);
    REQUIRE(journal->AppendLine(R"({"id":"b","repeat":0})", &error));
  }
  CHECK(ReadAll(path) == "{\"id\":\"a\",\"repeat\":0}\n{\"id\":\"b\",\"repeat\":0}\n");
  std::remove(path.c_str());
}

TEST_CASE("a damaged line in the middle is corruption, not a torn tail") {
  const std::string path = TempPath("corrupt");
  {
    std::ofstream out(path, std::ios::binary);
    out << "{\"id\":\"a\"}\nnot json\n{\"id\":\"c\"}\n";
  }
  plumb::JournalContents contents;
  std::string error;
  CHECK_FALSE(plumb::ReadJournal(path, &contents, &error));
  CHECK(error.find(":2: the journal is corrupt") != std::string::npos);
  std::remove(path.c_str());
}

TEST_CASE("invalid UTF-8 from a pipeline is journaled as U+FFFD, not lost") {
  const std::string path = TempPath("utf8");
  std::string error;
  plumb::CaseRecord record;
  record.id = "c1";
  record.request = R"({"id":"c1"})";
  record.parsed.answer = std::string(
      "a\xff"
      "b");
  {
    auto journal = plumb::RunJournal::Open(path, -1, &error);
    REQUIRE(journal);
    REQUIRE(journal->AppendLine(plumb::CaseRecordLine(record), &error));
  }
  const std::string line = ReadAll(path);
  CHECK(line.find("\"answer\":\"a\xEF\xBF\xBD"
                  "b\"") != std::string::npos);
  plumb::JournalContents contents;
  REQUIRE(plumb::ReadJournal(path, &contents, &error));
  REQUIRE(contents.records.size() == 1);
  std::remove(path.c_str());
}

TEST_CASE("a buffered journal writes once the buffer fills and on flush") {
  const std::string path = TempPath("buffered");
  std::string error;
  {
    auto journal = plumb::RunJournal::Open(path, -1, &error, /*buffer_bytes=*/40);
    REQUIRE(journal);
    REQUIRE(journal->AppendLine("{\"id\":\"a\",\"repeat\":0}", &error));  // 22 bytes waiting
    CHECK(ReadAll(path).empty());
    REQUIRE(journal->AppendLine("{\"id\":\"b\",\"repeat\":0}", &error));  // 44 >= 40: written
    CHECK(ReadAll(path) == "{\"id\":\"a\",\"repeat\":0}\n{\"id\":\"b\",\"repeat\":0}\n");
    REQUIRE(journal->AppendLine("{\"id\":\"c\",\"repeat\":0}", &error));
    REQUIRE(journal->Flush(&error));
    CHECK(ReadAll(path).size() == 3 * 22);
    REQUIRE(journal->AppendLine("{\"id\":\"d\",\"repeat\":0}", &error));
  }  // the destructor writes what is left
  plumb::JournalContents contents;
  REQUIRE(plumb::ReadJournal(path, &contents, &error));
  REQUIRE(contents.records.size() == 4);
  CHECK(contents.records[3]["id"] == "d");
  std::remove(path.c_str());
}
