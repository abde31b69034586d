#include "metrics/normalize.h"

namespace plumb::metrics {

bool ParseNormalizationProfile(std::string_view name, NormalizationProfile* out) {
  if (name == "squad") {
    *out = NormalizationProfile::kSquad;
  } else if (name == "mlqa") {
    *out = NormalizationProfile::kMlqa;
  } else if (name == "unicode") {
    *out = NormalizationProfile::kUnicode;
  } else {
    return false;
  }
  return true;
}

const char* NormalizationProfileName(NormalizationProfile profile) {
  switch (profile) {
    case NormalizationProfile::kSquad:
      return "squad";
    case NormalizationProfile::kMlqa:
      return "mlqa";
    case NormalizationProfile::kUnicode:
      return "unicode";
  }
  return "squad";
}

}  // namespace plumb::metrics

namespace plumb::metrics {

std::vector<std::string> NormalizeTokens(std::string_view text, NormalizationProfile profile,
                                         std::string_view lang) {
  switch (profile) {
    case NormalizationProfile::kSquad:
      return NormalizeSquadTokens(text);
    case NormalizationProfile::kMlqa:
      return NormalizeMlqaTokens(text, lang);
    case NormalizationProfile::kUnicode:
      return NormalizeUnicodeTokens(text, lang);
  }
  return NormalizeSquadTokens(text);
}

void NormalizeTokens(std::string_view text, NormalizationProfile profile, std::string_view lang,
                     TokenViews* out) {
  if (profile == NormalizationProfile::kSquad) {
    NormalizeSquadTokens(text, out);
  } else {
    out->Assign(NormalizeTokens(text, profile, lang));
  }
}

}  // namespace plumb::metrics
