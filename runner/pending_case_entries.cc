#include "runner/pending_case_entries.h"

#include <utility>

#include "runner/run_record.h"

namespace plumb {

PendingCaseEntries::PendingCaseEntries(const Suite& suite, std::vector<size_t> selected)
    : selected_(std::move(selected)) {
  thread_ = std::thread([this, &suite] {
    WriteRunRecordCases(suite, selected_, [this](std::string_view piece) {
      pieces_.emplace_back(piece);
      return true;
    });
  });
}

PendingCaseEntries::~PendingCaseEntries() {
  if (thread_.joinable()) thread_.join();
}

bool PendingCaseEntries::Write(const std::function<bool(std::string_view)>& sink) {
  if (thread_.joinable()) thread_.join();
  for (const std::string& piece : pieces_) {
    if (!sink(piece)) return false;
  }
  return true;
}

}  // namespace plumb
