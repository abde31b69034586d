// Driver for the long-answer differential check (long_answer_reference.py): reads one request a
// line on stdin and answers each with one line on stdout. Fields are hex-encoded UTF-8 bytes
// (tests/support/hex_fields.h); "~" as the answer is an abstention.
//   L <answer> <g> <gold>... <k> <knowledge>... <c> <cited>...
//   -> <token_recall> <covers_gold> <knowledge_f1 or -> <cited_support or ->   (%.17g each)
// with the squad profile, exactly as the case scorer calls the metrics.

#include <cstdio>
#include <iostream>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "metrics/long_answer_metrics.h"
#include "tests/support/hex_fields.h"

using plumb_test::DecodeHex;

namespace {

bool ReadTexts(std::istringstream* fields, std::vector<std::string>* out) {
  size_t count = 0;
  if (!(*fields >> count)) return false;
  out->resize(count);
  for (std::string& text : *out) {
    std::string field;
    if (!(*fields >> field) || !DecodeHex(field, &text)) return false;
  }
  return true;
}

std::string Format(std::optional<double> value) {
  if (!value) return "-";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.17g", *value);
  return buffer;
}

}  // namespace

int main() {
  namespace m = plumb::metrics;
  const m::NormalizationProfile squad = m::NormalizationProfile::kSquad;
  std::ios::sync_with_stdio(false);
  std::string line, out;
  size_t line_number = 0;
  while (std::getline(std::cin, line)) {
    ++line_number;
    std::istringstream fields(line);
    std::string kind, answer_field;
    std::vector<std::string> gold, knowledge, cited;
    std::optional<std::string> answer;
    bool ok = static_cast<bool>(fields >> kind >> answer_field) && kind == "L";
    if (ok && answer_field != "~") ok = DecodeHex(answer_field, &answer.emplace());
    ok = ok && ReadTexts(&fields, &gold) && ReadTexts(&fields, &knowledge) &&
         ReadTexts(&fields, &cited);
    if (!ok) {
      std::fprintf(stderr, "long_answer_driver: line %zu is not a valid request\n", line_number);
      return 2;
    }
    const std::vector<std::string> tokens =
        answer ? m::NormalizeTokens(*answer, squad, "en") : std::vector<std::string>();
    const m::LongAnswerScores scores =
        m::ScoreLongAnswer(tokens, m::NormalizeGold(gold, squad, "en"));
    const auto knowledge_f1 = knowledge.empty()
                                  ? std::nullopt
                                  : m::KnowledgeF1(tokens, m::JoinedTokens(knowledge, squad, "en"));
    const auto support = m::CitedSupport(tokens, m::JoinedTokens(cited, squad, "en"));
    out += Format(scores.token_recall) + " " + Format(scores.covers_gold) + " " +
           Format(knowledge_f1) + " " + Format(support) + "\n";
  }
  std::fwrite(out.data(), 1, out.size(), stdout);
  return 0;
}
