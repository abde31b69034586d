#include "runner/suite/suite.h"

namespace plumb {

const nlohmann::json& CaseInput(const Case& c) {
  static const nlohmann::json* const kEmpty = new nlohmann::json(nlohmann::json::object());
  return c.input.is_null() ? *kEmpty : c.input;
}

std::string TurnId(const std::string& session, int turn) {
  return session + "#" + std::to_string(turn);
}

bool SplitTurnId(const std::string& id, std::string* session, int* turn) {
  const size_t hash = id.rfind('#');
  if (hash == std::string::npos || hash == 0 || hash + 1 >= id.size()) return false;
  int n = 0;
  for (size_t i = hash + 1; i < id.size(); ++i) {
    if (id[i] < '0' || id[i] > '9' || n > 100000000) return false;
    n = n * 10 + (id[i] - '0');
  }
  if (n < 1) return false;
  *session = id.substr(0, hash);
  *turn = n;
  return true;
}

bool IsGraderRequestField(const std::string& field) {
  for (const char* name : {"grade", "rubric", "gold", "answer", "gold_sources", "cited"}) {
    if (field == name) return true;
  }
  return false;
}

}  // namespace plumb
