#include "runner/cli/help_text.h"

#include <map>
#include <vector>

namespace plumb {
namespace {

const std::map<std::string, std::string>& Metavars() {
  static const auto* metavars = new std::map<std::string, std::string>{
      {"SUITE", "SUITE"},        {"PREDICTIONS", "FILE"},  {"RUN_DIR", "RUN_DIR"},
      {"BASE_DIR", "RUN_DIR"},   {"CAND_DIR", "RUN_DIR"},  {"COMMAND", "COMMAND"},
      {"SHELL", "SHELL"},        {"--pipeline", "NAME"},   {"--pipelines", "FILE"},
      {"--out", "DIR"},          {"--jobs", "N"},          {"--repeat", "K"},
      {"--tag", "TAG"},          {"--case", "GLOB"},       {"--limit", "N"},
      {"--shard", "I/N"},        {"--label", "KEY=VALUE"}, {"--baseline", "RUN_DIR"},
      {"--html", "FILE"},        {"--junit", "FILE"},      {"--markdown", "FILE"},
      {"--gate", "METRIC,..."},  {"--min-effect", "X"},    {"--seed", "N"},
      {"--resamples", "B"},      {"--since", "RUN_DIR"},   {"--color", "WHEN"},
      {"--grade-cache", "FILE"}, {"--grader", "NAME"},     {"--labels", "FILE"},
      {"--sample", "N"},         {"--max-slowdown", "X"}};
  return *metavars;
}

std::string MetavarFor(const CLI::Option& option) {
  const std::string name = option.get_name(/*positional=*/false, /*all_options=*/false);
  for (const std::string& candidate :
       {name, "--" + (option.get_lnames().empty() ? std::string() : option.get_lnames().front())}) {
    auto found = Metavars().find(candidate);
    if (found != Metavars().end()) return found->second;
  }
  const std::string type = option.get_type_name();
  if (type.rfind("INT", 0) == 0 || type.rfind("UINT", 0) == 0) return "N";
  if (type.rfind("FLOAT", 0) == 0) return "X";
  return "VALUE";
}

}  // namespace

std::string Metavar(const CLI::Option& option) {
  if (option.nonpositional()) return option.get_type_name();
  auto found = Metavars().find(option.get_name(/*positional=*/true, /*all_options=*/false));
  return found != Metavars().end() ? found->second : option.get_name(true, false);
}

std::string CommandExample(const std::string& command) {
  static const auto* examples = new std::map<std::string, std::string>{
      {"run",
       "plumb run suites/ferry.yaml --pipeline retrieve -o plumb-out/pr -j 4 "
       "--baseline main-run --html report.html"},
      {"score", "plumb score suites/ferry.yaml replies.jsonl -o plumb-out/recorded"},
      {"check", "plumb check suites/ferry.yaml --since main-run"},
      {"drift", "plumb drift main-run plumb-out/pr --gate correct,token_f1 --markdown -"},
      {"compare",
       "plumb compare plumb-out/demo/retrieve plumb-out/demo/preload --html compare.html"},
      {"report", "plumb report plumb-out/pr --html report.html --junit junit.xml"},
      {"merge", "plumb merge shard-1 shard-2 shard-3 -o merged"},
      {"grade", "plumb grade plumb-out/pr --grader correctness"},
      {"label", "plumb label plumb-out/pr --out labels.jsonl --sample 100 --seed 7"},
      {"calibrate", "plumb calibrate suites/ferry.yaml --grader correctness --repeat 3"},
      {"help", "plumb help run"},
      {"completion", "plumb completion bash > /etc/bash_completion.d/plumb"}};
  auto found = examples->find(command);
  return found == examples->end() ? std::string() : found->second;
}

std::string ExitCodeText() {
  return "  0    every floor and ceiling held and no gated metric regressed\n"
         "  1    a floor or ceiling broke, or a gated metric regressed\n"
         "  2    usage, suite or configuration error (nothing was run)\n"
         "  3    too many case errors (above max_error_rate), or every case errored\n"
         "  130  interrupted by SIGINT, 143 by SIGTERM (the journal is kept; --resume "
         "continues)\n";
}

CLI::Validator AtLeast(long long minimum) {
  return CLI::Validator(
      [minimum](std::string& text) -> std::string {
        size_t used = 0;
        long long value = 0;
        try {
          value = std::stoll(text, &used);
        } catch (const std::exception&) {
          used = 0;
        }
        if (used == 0 || used != text.size()) return "must be a whole number (got '" + text + "')";
        if (value < minimum) {
          return "must be at least " + std::to_string(minimum) + " (got " + text + ")";
        }
        return std::string();
      },
      "");
}

CLI::Validator OneOf(std::vector<std::string> choices) {
  return CLI::Validator(
      [choices](std::string& text) -> std::string {
        for (const std::string& choice : choices) {
          if (text == choice) return std::string();
        }
        std::string list;
        for (size_t i = 0; i < choices.size(); ++i) {
          list += (i == 0 ? "" : i + 1 == choices.size() ? " or " : ", ") + choices[i];
        }
        return "must be " + list + " (got '" + text + "')";
      },
      "");
}

void ApplyHelpConventions(CLI::App* app) {
  app->get_formatter()->column_width(28);
  app->footer("Run 'plumb help COMMAND' for a command's options and an example.\n\nExit codes:\n" +
              ExitCodeText());
  for (CLI::App* command : app->get_subcommands([](CLI::App*) { return true; })) {
    for (CLI::Option* option : command->get_options()) {
      if (option->get_items_expected_max() == 0) continue;  // flags take no value
      // A positional's name is its metavariable already ("SUITE", not "SUITE SUITE").
      option->type_name(option->nonpositional() ? MetavarFor(*option) : std::string());
    }
    const std::string example = CommandExample(command->get_name());
    std::string footer;
    if (!example.empty()) footer = "Example:\n  " + example + "\n";
    if (command->get_name() != "help" && command->get_name() != "completion") {
      footer += "\nExit codes:\n" + ExitCodeText();
    }
    command->footer(footer);
  }
  for (CLI::Option* option : app->get_options()) {
    if (option->get_items_expected_max() > 0) option->type_name(MetavarFor(*option));
  }
}

}  // namespace plumb
