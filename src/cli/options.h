// Options many commands share, declared and parsed one way everywhere, and
// the examples that end each command's help.
//  - add_json_flag() and add_account_option() declare --json and --account
//    with the wording every command uses (the reference in docs/commands.md
//    is generated from it).
//  - The parsers turn option text into domain values. An empty text means the
//    option was not given; the optional forms then return nullopt. Every
//    error is an InputError that starts with the option's name, e.g.
//    "--as-of: '2025-02-30' is not a calendar date".
#pragma once

#include <fmt/format.h>

#include <CLI/CLI.hpp>
#include <initializer_list>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "core/error.h"

namespace keel::cli {

// Ends the command's --help with one or two example command lines, each
// starting "keel <the command>"; the reference and the manual page show them
// too (examples()). A group's subcommands inherit its footer when created,
// so each command sets its own.
void add_examples(CLI::App& cmd, std::initializer_list<const char*> lines);
std::vector<std::string> examples(const CLI::App& cmd);

void add_json_flag(CLI::App& cmd, bool& json);
// --json and --csv (RFC 4180, see cli/csv_rows.h), one or the other.
void add_json_and_csv_flags(CLI::App& cmd, bool& json, bool& csv);
void add_account_option(CLI::App& cmd, std::string& account,
                        const std::string& help = "Only this account");
// --currency C of the reports: every figure in C. currency_option() reads it
// (unset when not given; InputError naming --currency for a code that is not
// ISO 4217).
void add_currency_option(CLI::App& cmd, std::string& currency);
bool names_missing_rate(const InputError& e);
std::optional<std::string> currency_option(const std::string& text);
// Runs a report; with --currency, a missing exchange rate names the option
// too ("--currency JPY: ... no exchange rate for JPY/USD on or before ...").
template <typename F>
auto with_currency_option(const std::optional<std::string>& asked, F report) {
  try {
    return report();
  } catch (const InputError& e) {
    if (!asked || !names_missing_rate(e)) throw;
    throw InputError(fmt::format("--currency {}: {}", *asked, e.what()));
  }
}

std::optional<std::string> text_option(const std::string& text);
Date date_value(const std::string& text, std::string_view option);  // empty text is refused
std::optional<Date> date_option(const std::string& text, std::string_view option);
Date date_option_or_today(const std::string& text, std::string_view option);
Decimal decimal_value(const std::string& text, std::string_view option);  // empty text is refused
std::optional<Decimal> decimal_option(const std::string& text, std::string_view option);
// Files a command may write, each (option, path); standard output carries
// one thing: the JSON (when `json`), or one file given as "-". Throws
// InputError "<option> -: standard output already carries <the other>".
void one_on_standard_output(
    const std::vector<std::pair<std::string_view, const std::string*>>& files, bool json);
// A whole number in [lo, hi]; `what` names it in the error ("a calendar year
// (1 to 9999)"). Empty text is refused like any other.
int whole_number(const std::string& text, std::string_view option, int lo, int hi,
                 std::string_view what);

}  // namespace keel::cli
