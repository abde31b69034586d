#ifndef PLUMB_RUNNER_PENDING_CASE_ENTRIES_H_
#define PLUMB_RUNNER_PENDING_CASE_ENTRIES_H_

/// run.json's case entries (WriteRunRecordCases), formatted on a thread of their own from the
/// moment the suite and the selection are known: they depend on nothing else, so the work
/// overlaps the pipeline calls or the scoring of recorded replies instead of following them.
/// FinishRun writes them between the record's head and tail. The text is held in memory until
/// then (about 400 bytes a case).

#include <functional>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#include "runner/suite.h"

namespace plumb {

class PendingCaseEntries {
 public:
  /// Starts formatting the entries of suite.cases[i] for each i in `selected`, in that order.
  /// `suite` must outlive this object and stay unchanged while it lives.
  PendingCaseEntries(const Suite& suite, std::vector<size_t> selected);
  ~PendingCaseEntries();  // waits for the thread
  PendingCaseEntries(const PendingCaseEntries&) = delete;
  PendingCaseEntries& operator=(const PendingCaseEntries&) = delete;

  /// Waits for the entries, then hands them to `sink` in order, in pieces; false as soon as
  /// `sink` returns false. Call once.
  bool Write(const std::function<bool(std::string_view)>& sink);

 private:
  std::vector<size_t> selected_;
  std::vector<std::string> pieces_;
  std::thread thread_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_PENDING_CASE_ENTRIES_H_
