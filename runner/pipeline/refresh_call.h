#ifndef PLUMB_RUNNER_PIPELINE_REFRESH_CALL_H_
#define PLUMB_RUNNER_PIPELINE_REFRESH_CALL_H_

/// Calls a pipeline's `refresh:` (issue 23) once: the argv command run to its exit, or the
/// HTTP request sent and answered, with `{corpus}` and `{update}` filled in. The run calls it
/// before the cases asked after a corpus update and records how long it took (refresh_ms).
/// Blocking; one call at a time per pipeline (nothing else is sent meanwhile).

#include <atomic>
#include <string>

#include "runner/suite/suite.h"

namespace plumb {

struct RefreshOutcome {
  bool ok = false;
  bool interrupted = false;  // `stop` was raised while it ran; the refresh was abandoned
  double ms = 0;             // wall time from start to exit or reply (to the give-up point)
  std::string error;         // why it failed: exit status, HTTP status, timeout (redacted)
  std::string output;        // a bounded excerpt of what it wrote (stderr/stdout or body)
};

/// `{corpus}` and `{update}` in `text` replaced by `corpus_dir` and `update_id`.
std::string FillRefreshPlaceholders(const std::string& text, const std::string& corpus_dir,
                                    const std::string& update_id);

/// Runs `pipeline.refresh` (which must be set) for the corpus at `corpus_dir` after update
/// `update_id`, waiting at most pipeline.refresh_timeout_ms. An argv refresh runs in the
/// pipeline's cwd with its env; it succeeds when it exits 0 (killed with its process group at
/// the timeout). An HTTP refresh sends the request (by default {"corpus": DIR, "update": ID};
/// a `request:` block is rendered as a case request whose input is that object, then every
/// string's placeholders are filled) and succeeds on a 2xx answer. `stop` (may be null) is
/// polled: when raised, the refresh is abandoned and `interrupted` set.
RefreshOutcome CallRefresh(const PipelineConfig& pipeline, const std::string& corpus_dir,
                           const std::string& update_id, const std::atomic<bool>* stop);

}  // namespace plumb

#endif  // PLUMB_RUNNER_PIPELINE_REFRESH_CALL_H_
