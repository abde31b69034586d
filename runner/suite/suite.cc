#include "runner/suite/suite.h"

namespace plumb {

const nlohmann::json& CaseInput(const Case& c) {
  static const nlohmann::json* const kEmpty = new nlohmann::json(nlohmann::json::object());
  return c.input.is_null() ? *kEmpty : c.input;
}

bool IsGraderRequestField(const std::string& field) {
  for (const char* name : {"grade", "rubric", "gold", "answer", "gold_sources", "cited"}) {
    if (field == name) return true;
  }
  return false;
}

}  // namespace plumb
