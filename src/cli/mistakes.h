// Kinder words for command lines that do not parse: a mistyped or missing
// command, or an unknown option, explained with the close names keel knows
// ("Did you mean 'holdings'?", core/suggest.h) and where to read more.
//  - explain_refusal(app, args) walks args (argv without the program name)
//    down app's commands as CLI11 does, options of a command's parents
//    included, and describes the first unknown command or option, or a
//    command that needs one of its subcommands; nullopt when the trouble lies
//    elsewhere (CLI11's own message then stands). Words from the command line
//    are shown through printable().
//  - find_command(app, words) is the command `words` name ("record", "buy");
//    throws UsageError with the same description when one is unknown.
//  - command_path(cmd) is the command's full name, "keel record buy".
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

namespace keel::cli {

// A command line keel understood the shape of but not the words: exit 2. The
// message may span lines; its first line follows "keel: error: ".
struct UsageError : std::runtime_error {
  using std::runtime_error::runtime_error;
};

std::optional<std::string> explain_refusal(const CLI::App& app,
                                           const std::vector<std::string>& args);
const CLI::App& find_command(const CLI::App& app, const std::vector<std::string>& words);
std::string command_path(const CLI::App& cmd);

}  // namespace keel::cli
