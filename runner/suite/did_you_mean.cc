#include "runner/suite/did_you_mean.h"

#include <algorithm>

namespace plumb {

int EditDistance(std::string_view a, std::string_view b) {
  // Three rolling rows: the transposition step looks two rows back.
  std::vector<int> before(b.size() + 1), previous(b.size() + 1), current(b.size() + 1);
  for (size_t j = 0; j <= b.size(); ++j) previous[j] = int(j);
  for (size_t i = 1; i <= a.size(); ++i) {
    current[0] = int(i);
    for (size_t j = 1; j <= b.size(); ++j) {
      int cost = a[i - 1] == b[j - 1] ? 0 : 1;
      current[j] = std::min({previous[j] + 1, current[j - 1] + 1, previous[j - 1] + cost});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1]) {
        current[j] = std::min(current[j], before[j - 2] + 1);
      }
    }
    std::swap(before, previous);
    std::swap(previous, current);
  }
  return previous[b.size()];
}

std::string ClosestName(std::string_view word, const std::vector<std::string>& candidates) {
  std::string best;
  int best_distance = 3;
  for (const std::string& candidate : candidates) {
    int distance = EditDistance(word, candidate);
    // A distance as long as the word itself would suggest a name with nothing in common.
    if (distance < best_distance && distance < int(word.size())) {
      best_distance = distance;
      best = candidate;
    }
  }
  return best;
}

std::string DidYouMeanHint(std::string_view word, const std::vector<std::string>& candidates,
                           std::string_view kind) {
  std::string closest = ClosestName(word, candidates);
  if (!closest.empty()) return "did you mean '" + closest + "'?";
  std::string hint = "valid " + std::string(kind) + " are: ";
  for (size_t i = 0; i < candidates.size(); ++i) {
    if (i > 0) hint += ", ";
    hint += candidates[i];
  }
  return hint;
}

}  // namespace plumb
