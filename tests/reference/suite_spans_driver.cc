// Loads a suite with plumb's suite loader and prints what it resolved, as one JSON object, for
// suite_spans_reference.py to check against Python's own string indexing.

#include <cstdio>

#include "runner/suite/suite_loader.h"

int main(int argc, char** argv) {
  if (argc != 2) {
    std::fprintf(stderr, "usage: suite_spans_driver SUITE\n");
    return 2;
  }
  plumb::Suite suite;
  plumb::Diagnostics errors, warnings;
  bool ok = plumb::LoadSuite(argv[1], {}, &suite, &errors, &warnings);
  nlohmann::json out = {{"ok", ok},
                        {"errors", nlohmann::json::array()},
                        {"warnings", nlohmann::json::array()},
                        {"cases", nlohmann::json::array()}};
  for (const plumb::Diagnostic& d : errors) out["errors"].push_back(d.Format());
  for (const plumb::Diagnostic& d : warnings) out["warnings"].push_back(d.Format("warning"));
  for (const plumb::Case& c : suite.cases) {
    nlohmann::json sources = nlohmann::json::array();
    for (const plumb::GoldSpan& s : c.sources) {
      sources.push_back({{"doc", s.doc}, {"start", s.start}, {"end", s.end}, {"text", s.text}});
    }
    out["cases"].push_back({{"id", c.id}, {"sources", sources}});
  }
  std::printf("%s\n", out.dump().c_str());
  return 0;
}
