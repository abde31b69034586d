#include "runner/suite/suite.h"

namespace plumb {

const nlohmann::json& CaseInput(const Case& c) {
  static const nlohmann::json* const kEmpty = new nlohmann::json(nlohmann::json::object());
  return c.input.is_null() ? *kEmpty : c.input;
}

}  // namespace plumb
