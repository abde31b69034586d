// Driver for the SQuAD differential check (squad_normalize_reference.py): reads requests from
// stdin, one per line, and answers each with one line on stdout. Fields are hex-encoded UTF-8
// bytes (so any byte string, invalid UTF-8 included, survives the pipe); "-" is the empty string
// and "~" (prediction only) an abstention.
//   N <text>                    ->  <hex of NormalizeSquad(text)>
//   S <prediction> [<gold>...]  ->  <exact_match> <token_f1 as %.17g>   (ScoreAnswer, squad)

#include <cstdio>
#include <iostream>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "metrics/answer_metrics.h"
#include "metrics/normalize.h"
#include "tests/support/hex_fields.h"

using plumb_test::DecodeHex;
using plumb_test::EncodeHex;

int main() {
  using plumb::metrics::NormalizationProfile;
  std::ios::sync_with_stdio(false);
  std::string line;
  std::string out;
  size_t line_number = 0;
  while (std::getline(std::cin, line)) {
    ++line_number;
    std::istringstream fields(line);
    std::string kind;
    fields >> kind;
    std::vector<std::string> values;
    for (std::string field; fields >> field;) values.push_back(field);
    auto bad = [&]() {
      std::fprintf(stderr, "squad_normalize_driver: line %zu is not a valid request\n",
                   line_number);
      return 2;
    };
    if (kind == "N" && values.size() == 1) {
      std::string text;
      if (!DecodeHex(values[0], &text)) return bad();
      out += EncodeHex(plumb::metrics::NormalizeSquad(text));
    } else if (kind == "S" && !values.empty()) {
      std::optional<std::string> prediction;
      if (values[0] != "~") {
        prediction.emplace();
        if (!DecodeHex(values[0], &*prediction)) return bad();
      }
      std::vector<std::string> answers(values.size() - 1);
      for (size_t i = 1; i < values.size(); ++i) {
        if (!DecodeHex(values[i], &answers[i - 1])) return bad();
      }
      const auto gold = plumb::metrics::NormalizeGold(answers, NormalizationProfile::kSquad, "en");
      const auto scores =
          plumb::metrics::ScoreAnswer(prediction, gold, NormalizationProfile::kSquad, "en");
      char buffer[64];
      std::snprintf(buffer, sizeof buffer, "%d %.17g", static_cast<int>(scores.exact_match),
                    scores.token_f1);
      out += buffer;
    } else {
      return bad();
    }
    out.push_back('\n');
  }
  std::fwrite(out.data(), 1, out.size(), stdout);
  return 0;
}
