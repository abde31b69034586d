#include "runner/compare/session_drift.h"

#include <algorithm>

namespace plumb {

std::vector<SessionLoss> SessionsThatLostATurn(const std::vector<CaseChange>& lost) {
  std::vector<SessionLoss> out;
  for (const CaseChange& change : lost) {
    std::string session;
    int turn = 0;
    if (!SplitTurnId(change.id, &session, &turn)) continue;
    auto it = std::find_if(out.begin(), out.end(),
                           [&](const SessionLoss& s) { return s.session == session; });
    if (it == out.end()) it = out.insert(out.end(), SessionLoss{session, {}});
    it->turns.push_back(turn);
  }
  for (SessionLoss& s : out) std::sort(s.turns.begin(), s.turns.end());
  return out;
}

std::string SessionLossText(const SessionLoss& loss) {
  std::string text = loss.session + (loss.turns.size() == 1 ? " (turn " : " (turns ");
  for (size_t i = 0; i < loss.turns.size(); ++i) {
    text += (i ? ", " : "") + std::to_string(loss.turns[i]);
  }
  return text + ")";
}

}  // namespace plumb
