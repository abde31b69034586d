// Prints plumb_metrics' grader-calibration statistics (metrics/label_agreement.h) for inputs read
// from stdin, one command per line, so label_agreement_reference.py can recompute each value
// with sklearn and scipy. Verdicts travel as 0/1, numbers as Python's repr on the way in and
// %.17g on the way out; an undefined value prints as nan. Commands:
//   verdicts N P... G...  -> pass_pass pass_fail fail_pass fail_fail n base_rate
//                            grader_pass_rate agreement kappa sensitivity sens_low sens_high
//                            specificity spec_low spec_high
//   spearman N X... Y...  -> rho mean_absolute_difference
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include "metrics/label_agreement.h"

namespace {

using namespace plumb::metrics;

double ReadDouble(std::istream& in) {
  std::string text;
  in >> text;
  return std::strtod(text.c_str(), nullptr);
}

void Print(const std::vector<double>& values) {
  std::string line;
  char buffer[64];
  for (double v : values) {
    std::snprintf(buffer, sizeof buffer, "%.17g", v);
    if (!line.empty()) line += ' ';
    line += buffer;
  }
  std::printf("%s\n", line.c_str());
}

}  // namespace

int main() {
  std::string line;
  while (std::getline(std::cin, line)) {
    std::istringstream in(line);
    std::string command;
    size_t n = 0;
    in >> command >> n;
    if (command == "verdicts") {
      std::vector<bool> person(n), grader(n);
      for (size_t i = 0; i < n; ++i) person[i] = ReadDouble(in) != 0;
      for (size_t i = 0; i < n; ++i) grader[i] = ReadDouble(in) != 0;
      const AgreementTable t = CountAgreement(person, grader);
      const AgreementSummary s = SummarizeAgreement(t, 200);
      Print({static_cast<double>(t.pass_pass), static_cast<double>(t.pass_fail),
             static_cast<double>(t.fail_pass), static_cast<double>(t.fail_fail),
             static_cast<double>(s.n), s.base_rate, s.grader_pass_rate, s.agreement, s.kappa,
             s.sensitivity, s.sensitivity_interval.low, s.sensitivity_interval.high, s.specificity,
             s.specificity_interval.low, s.specificity_interval.high});
    } else if (command == "spearman") {
      std::vector<double> x(n), y(n);
      for (double& v : x) v = ReadDouble(in);
      for (double& v : y) v = ReadDouble(in);
      Print({SpearmanRho(x, y), MeanAbsoluteDifference(x, y)});
    } else {
      std::fprintf(stderr, "unknown command %s\n", command.c_str());
      return 2;
    }
    std::fflush(stdout);
  }
  return 0;
}
