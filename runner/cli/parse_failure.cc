#include "runner/cli/parse_failure.h"

#include "runner/suite/did_you_mean.h"

namespace plumb {
namespace {

std::vector<std::string> CommandNames(CLI::App& app) {
  std::vector<std::string> names;
  for (CLI::App* command :
       app.get_subcommands([](CLI::App* c) { return !c->get_group().empty(); })) {
    names.push_back(command->get_name());
  }
  return names;
}

std::vector<std::string> OptionNames(const CLI::App& command) {
  std::vector<std::string> names;
  for (const CLI::Option* option : command.get_options()) {
    for (const std::string& name : option->get_lnames()) names.push_back("--" + name);
    for (const std::string& name : option->get_snames()) names.push_back("-" + name);
  }
  return names;
}

bool Known(const std::vector<std::string>& names, const std::string& word) {
  for (const std::string& name : names) {
    if (name == word) return true;
  }
  return false;
}

/// "--jobs=3" -> "--jobs".
std::string OptionWord(const std::string& arg) { return arg.substr(0, arg.find('=')); }

bool LooksLikeOption(const std::string& arg) {
  if (arg.size() < 2 || arg[0] != '-') return false;
  return !(arg[1] >= '0' && arg[1] <= '9') && arg[1] != '.';  // "-1", "-.5" are values
}

std::string UnknownOption(const std::string& prefix, const std::string& word,
                          const std::vector<std::string>& names, const std::string& help) {
  const std::string closest = ClosestName(word, names);
  std::string message = prefix + "unknown option '" + word + "'";
  if (!closest.empty()) return message + "; did you mean '" + closest + "'?";
  return message + "; " + help + " lists the options";
}

/// "--jobs: must be at least 1" -> "--jobs must be at least 1".
std::string PlainValidation(std::string text) {
  const size_t colon = text.find(": ");
  if (colon != std::string::npos && text.rfind("--", 0) == 0 && text.find(' ') == colon + 1) {
    text.erase(colon, 1);
  }
  return text;
}

}  // namespace

std::string ExplainParseFailure(CLI::App& app, const std::vector<std::string>& args,
                                const CLI::ParseError& error) {
  const std::vector<std::string> commands = CommandNames(app);
  const std::vector<std::string> top_options = OptionNames(app);
  CLI::App* command = nullptr;
  size_t command_at = args.size();
  for (size_t i = 0; i < args.size(); ++i) {
    if (Known(commands, args[i])) {
      command = app.get_subcommand(args[i]);
      command_at = i;
      break;
    }
  }

  if (command == nullptr) {
    for (const std::string& arg : args) {
      if (LooksLikeOption(arg) && !Known(top_options, OptionWord(arg))) {
        return UnknownOption("plumb: ", OptionWord(arg), top_options, "plumb --help");
      }
    }
    for (const std::string& arg : args) {
      if (arg.empty() || arg[0] == '-') continue;
      return "plumb: '" + arg + "' is not a plumb command; " +
             DidYouMeanHint(arg, commands, "commands") + " (plumb --help describes them)";
    }
    std::string list;
    for (const std::string& name : commands) list += (list.empty() ? "" : ", ") + name;
    return "plumb: a command is required, one of: " + list + " (plumb --help describes them)";
  }

  const std::string name = command->get_name();
  const std::string prefix = "plumb " + name + ": ";
  const std::string help = "plumb help " + name;
  std::vector<std::string> names = OptionNames(*command);
  for (const std::string& option : top_options) names.push_back(option);
  for (size_t i = command_at + 1; i < args.size(); ++i) {
    if (args[i] == "--") break;
    if (LooksLikeOption(args[i]) && !Known(names, OptionWord(args[i]))) {
      return UnknownOption(prefix, OptionWord(args[i]), names, help);
    }
  }
  // CLI11 names some errors after the command (ExtrasError's get_name() is "run"): go by type.
  if (dynamic_cast<const CLI::ExtrasError*>(&error) != nullptr) {
    // The words are in CLI11's message, after ": " and separated by spaces.
    const std::string message = error.what();
    const size_t colon = message.find(": ");
    const std::string rest = colon == std::string::npos ? std::string() : message.substr(colon + 2);
    std::vector<std::string> words;
    for (size_t start = 0; start < rest.size();) {
      size_t end = rest.find(' ', start);
      if (end == std::string::npos) end = rest.size();
      if (end > start) words.push_back(rest.substr(start, end - start));
      start = end + 1;
    }
    std::string extra;
    for (const std::string& word : words) extra += (extra.empty() ? "'" : ", '") + word + "'";
    return prefix + "unexpected argument" + (words.size() == 1 ? " " : "s ") + extra + "; " + help +
           " shows what the command takes";
  }
  if (dynamic_cast<const CLI::RequiredError*>(&error) != nullptr) {
    return prefix + PlainValidation(error.what()) + "; " + help + " shows the usage";
  }
  if (dynamic_cast<const CLI::ValidationError*>(&error) != nullptr ||
      dynamic_cast<const CLI::ConversionError*>(&error) != nullptr) {
    return prefix + PlainValidation(error.what());
  }
  return prefix + PlainValidation(error.what()) + "; " + help + " shows the usage";
}

}  // namespace plumb
