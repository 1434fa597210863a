#include "cli/mistakes.h"

#include <fmt/format.h>

#include "core/suggest.h"
#include "core/text.h"

namespace keel::cli {
namespace {

std::vector<const CLI::App*> subcommands(const CLI::App& app) {
  return app.get_subcommands([](const CLI::App*) { return true; });
}

const CLI::App* subcommand(const CLI::App& app, const std::string& word) {
  for (const auto* sub : subcommands(app))
    if (sub->check_name(word)) return sub;
  return nullptr;
}

// An option of the command or of a command above it (global options are
// accepted after the command too).
const CLI::Option* option(const CLI::App& app, const std::string& name) {
  for (const CLI::App* a = &app; a; a = a->get_parent())
    if (const auto* o = a->get_option_no_throw(name)) return o;
  return nullptr;
}

std::string quoted_list(const std::vector<std::string>& names) {
  std::vector<std::string> quoted;
  for (const auto& n : names) quoted.push_back("'" + n + "'");
  return fmt::format("{}", fmt::join(quoted, ", "));
}

std::string did_you_mean(const std::vector<std::string>& close) {
  if (close.empty()) return "";
  if (close.size() == 1) return fmt::format("\nDid you mean {}?", quoted_list(close));
  return fmt::format("\nDid you mean one of: {}?", quoted_list(close));
}

// "keel help record" for a command under the root, "keel help" for the root.
std::string help_of(const CLI::App& cmd) {
  const std::string path = command_path(cmd);
  return path == "keel" ? "keel help" : "keel help" + path.substr(4);
}

std::string unknown_command(const CLI::App& at, const std::string& word) {
  std::vector<std::string> names;
  for (const auto* sub : subcommands(at)) names.push_back(sub->get_name());
  const bool root = at.get_parent() == nullptr;
  return fmt::format("'{}' is not a {}{}\nRun '{}' for {}.", printable(word),
                     root ? "keel command" : "command of '" + command_path(at) + "'",
                     did_you_mean(closest(word, names)), help_of(at),
                     root ? "the list of commands" : "its commands");
}

std::string unknown_option(const CLI::App& at, const std::string& name) {
  std::vector<std::string> names;
  for (const CLI::App* a = &at; a; a = a->get_parent())
    for (const auto* o : a->get_options([](const CLI::Option* o) { return !o->get_positional(); }))
      for (const auto& l : o->get_lnames()) names.push_back("--" + l);
  return fmt::format("'{}' has no option '{}'{}\nRun '{}' for its options.", command_path(at),
                     printable(name), did_you_mean(closest(name, names)), help_of(at));
}

std::string missing_command(const CLI::App& at) {
  if (at.get_parent() == nullptr)
    return "no command given\nRun 'keel help' for the list of commands, or 'keel demo' to see "
           "keel at work.";
  std::vector<std::string> names;
  for (const auto* sub : subcommands(at)) names.push_back(sub->get_name());
  return fmt::format("'{}' needs one of its commands: {}\nRun '{}' for what each does.",
                     command_path(at), fmt::join(names, ", "), help_of(at));
}

}  // namespace

std::string command_path(const CLI::App& cmd) {
  return cmd.get_parent() ? command_path(*cmd.get_parent()) + " " + cmd.get_name() : "keel";
}

std::optional<std::string> explain_refusal(const CLI::App& app,
                                           const std::vector<std::string>& args) {
  const CLI::App* at = &app;
  for (std::size_t i = 0; i < args.size(); ++i) {
    const std::string& arg = args[i];
    if (arg == "--") break;
    if (arg.size() > 1 && arg[0] == '-') {
      const std::string name = arg.substr(0, arg.find('='));
      const CLI::Option* o = option(*at, name);
      if (!o) return unknown_option(*at, name);
      if (o->get_items_expected_max() > 0 && name.size() == arg.size()) ++i;  // its value
      continue;
    }
    if (const auto* sub = subcommand(*at, arg)) {
      at = sub;
      continue;
    }
    const bool takes_words =
        !at->get_options([](const CLI::Option* o) { return o->get_positional(); }).empty();
    if (!subcommands(*at).empty() && !takes_words) return unknown_command(*at, arg);
  }
  if (!subcommands(*at).empty() && at->get_require_subcommand_min() > 0)
    return missing_command(*at);
  return std::nullopt;
}

const CLI::App& find_command(const CLI::App& app, const std::vector<std::string>& words) {
  const CLI::App* at = &app;
  for (const auto& word : words) {
    const auto* sub = subcommand(*at, word);
    if (!sub) throw UsageError(unknown_command(*at, word));
    at = sub;
  }
  return *at;
}

}  // namespace keel::cli
