#include "runner/run/human_labels.h"

#include <cmath>
#include <fstream>
#include <set>
#include <sstream>
#include <utility>

#include "runner/base/sha256.h"

namespace plumb {
namespace {

std::string Where(const std::string& path, int line, int column) {
  return path + ":" + std::to_string(line) + ":" + std::to_string(column) + ": error: ";
}

// The label as a grade in [0, 1], or false with the reason.
bool LabelGrade(const nlohmann::json& label, GradeScale scale, double* grade, std::string* reason) {
  if (label.is_string()) {
    const std::string text = label.get<std::string>();
    if (text == "pass" || text == "fail") {
      *grade = text == "pass" ? 1.0 : 0.0;
      return true;
    }
    *reason = "label '" + text + "' is neither \"pass\" nor \"fail\"";
    return false;
  }
  if (!label.is_number()) {
    *reason = "label must be \"pass\", \"fail\" or a number on the grader's scale";
    return false;
  }
  const double x = label.get<double>();
  switch (scale) {
    case GradeScale::kPassFail:
      if (x == 0 || x == 1) {
        *grade = x;
        return true;
      }
      *reason =
          "a pass-fail grader's label is \"pass\" or \"fail\" (or 1 or 0), not " + label.dump();
      return false;
    case GradeScale::kUnit:
      if (std::isfinite(x) && x >= 0 && x <= 1) {
        *grade = x;
        return true;
      }
      *reason = "label " + label.dump() + " is off the grader's scale 0..1";
      return false;
    case GradeScale::kOneToFive:
      if (std::isfinite(x) && x >= 1 && x <= 5) {
        *grade = (x - 1) / 4;
        return true;
      }
      *reason = "label " + label.dump() + " is off the grader's scale 1-5";
      return false;
  }
  return false;
}

}  // namespace

bool ReadHumanLabels(const std::string& path, const Suite& suite, GradeScale scale,
                     HumanLabels* out, std::vector<std::string>* errors) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    errors->push_back(path + ": cannot read the labels file (plumb label RUN_DIR --out " + path +
                      " writes a sheet to fill in)");
    return false;
  }
  std::stringstream buffer;
  buffer << in.rdbuf();
  const std::string bytes = buffer.str();
  out->path = path;
  out->sha256 = Sha256Hex(bytes);
  std::set<std::pair<std::string, std::string>> seen;
  std::istringstream lines(bytes);
  std::string line;
  int number = 0;
  const size_t before = errors->size();
  while (std::getline(lines, line)) {
    number += 1;
    const size_t first = line.find_first_not_of(" \t\r");
    if (first == std::string::npos || line[first] == '#') continue;  // blank, or a comment
    nlohmann::json json;
    try {
      json = nlohmann::json::parse(line);
    } catch (const nlohmann::json::parse_error& e) {
      errors->push_back(Where(path, number, static_cast<int>(e.byte)) + "not valid JSON (" +
                        e.what() + ")");
      continue;
    }
    if (!json.is_object()) {
      errors->push_back(Where(path, number, 1) + "a label line is a JSON object");
      continue;
    }
    auto id = json.find("id");
    if (id == json.end() || !id->is_string()) {
      errors->push_back(Where(path, number, 1) + "no \"id\" (the case id, a string)");
      continue;
    }
    HumanLabel label;
    label.line = number;
    label.id = id->get<std::string>();
    if (suite.case_ids.Find(suite.cases, label.id) == CaseIdIndex::kAbsent) {
      errors->push_back(Where(path, number, 1) + "case '" + label.id + "' is not in " + suite.path);
      continue;
    }
    auto answer = json.find("answer");
    if (answer == json.end() || !(answer->is_string() || answer->is_null())) {
      errors->push_back(Where(path, number, 1) +
                        "no \"answer\" (the labelled answer: a string, or null for an "
                        "abstention)");
      continue;
    }
    label.answer = *answer;
    const nlohmann::json written = json.value("label", nlohmann::json());
    if (written.is_null() || (written.is_string() && written.get<std::string>().empty())) {
      out->unlabelled += 1;
      continue;
    }
    std::string reason;
    if (!LabelGrade(written, scale, &label.grade, &reason)) {
      errors->push_back(Where(path, number, 1) + reason);
      continue;
    }
    label.written = written;
    if (auto cited = json.find("cited"); cited != json.end() && cited->is_array()) {
      label.cited = *cited;
    }
    label.by = json.value("by", nlohmann::json()).is_string() ? json["by"].get<std::string>() : "";
    label.note =
        json.value("note", nlohmann::json()).is_string() ? json["note"].get<std::string>() : "";
    if (!seen.insert({label.id, label.answer.dump()}).second) {
      errors->push_back(Where(path, number, 1) + "case '" + label.id +
                        "' with this answer is labelled twice; keep one line per answer");
      continue;
    }
    out->labelled.push_back(std::move(label));
  }
  return errors->size() == before;
}

}  // namespace plumb
