#ifndef PLUMB_RUNNER_BASE_STATUS_H_
#define PLUMB_RUNNER_BASE_STATUS_H_

/// Status carries success or a message a user can act on, across every runner layer.
/// Exceptions never cross a module boundary; functions that can fail return a Status
/// (or fill a Diagnostics list when they can report several problems at once).

#include <string>
#include <utility>

namespace plumb {

class Status {
 public:
  Status() = default;
  static Status Ok() { return Status(); }
  static Status Error(std::string message) { return Status(std::move(message)); }

  bool ok() const { return !failed_; }
  /// Empty when ok(); otherwise a full sentence naming what failed and what to do.
  const std::string& message() const { return message_; }

 private:
  explicit Status(std::string message) : failed_(true), message_(std::move(message)) {}
  bool failed_ = false;
  std::string message_;
};

}  // namespace plumb

#endif  // PLUMB_RUNNER_BASE_STATUS_H_
