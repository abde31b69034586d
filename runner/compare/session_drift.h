#ifndef PLUMB_RUNNER_COMPARE_SESSION_DRIFT_H_
#define PLUMB_RUNNER_COMPARE_SESSION_DRIFT_H_

/// Multi-turn sessions in a drift (issue 22). Turns are paired by their ids ("SESSION#N") like
/// any case; this gathers the lost turns by session, so a report can list the sessions that
/// lost a turn (and which turns) apart from the plain cases.

#include <string>
#include <vector>

#include "runner/compare/drift.h"
#include "runner/suite/suite.h"

namespace plumb {

struct SessionLoss {
  std::string session;
  std::vector<int> turns;  // the lost turns, ascending
};

/// The sessions with at least one lost turn in `lost`, in order of their first lost turn there.
std::vector<SessionLoss> SessionsThatLostATurn(const std::vector<CaseChange>& lost);

/// "fares-by-vehicle (turns 2, 4)": one session's entry as the reports write it.
std::string SessionLossText(const SessionLoss& loss);

}  // namespace plumb

#endif  // PLUMB_RUNNER_COMPARE_SESSION_DRIFT_H_
