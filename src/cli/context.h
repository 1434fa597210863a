// What every command shares: the global options and how to reach the ledger.
// Commands only parse, call a module, and print; no ledger logic lives here.
#pragma once

#include <CLI/CLI.hpp>
#include <cstdio>
#include <filesystem>
#include <functional>
#include <string>

#include "io/errors.h"
#include "report/table.h"
#include "store/database.h"

namespace keel::cli {

struct Context {
  std::string db_path;  // --db / KEEL_DB; empty means the default location
  bool allow_unsafe_permissions = false;
  bool no_pager = false;  // --no-pager

  std::filesystem::path ledger_path() const;
  // Reports read (and still work where the ledger cannot be written);
  // commands that change it ask for Access::write, init for Access::create.
  store::Database open_ledger(store::Access access = store::Access::read) const;
  bool colour() const;  // stdout is a terminal and NO_COLOR is not set
  // How tables written to stdout look: colour as colour(), and the terminal's
  // width to fit (none when stdout is not a terminal).
  report::Style style() const;
};

// Prints text to stdout exactly as given; a failed write is an InputError
// ("cannot write to standard output: disk full").
void out(const std::string& text);
// Flushes stdout at the end of a command, with the same error. Text held for
// the pager is shown first: through $PAGER when it is longer than the
// terminal, else printed as it is.
void finish_output();

// Paging: when stdout is a terminal and $PAGER is not set to "" or "cat",
// out() holds the command's text until finish_output(), which shows long
// text through $PAGER (default "less -FRX": it quits at once when the text
// fits, keeps colours, leaves the screen as it was). Piped output is never
// paged. --no-pager keeps it from starting.
void hold_output_for_pager();
// Prints held text as it is and stops holding (before an error message, or
// before a file written to standard output). Never throws.
void release_held_output() noexcept;

// Runs `read`; a refused file's lines (one per bad row) go to stderr before
// the error itself reaches main().
template <typename F>
auto printing_refusals(F&& read) {
  try {
    return read();
  } catch (const io::ImportRefused& e) {
    for (const auto& line : e.lines()) std::fputs((line + "\n").c_str(), stderr);
    throw;
  }
}

// Each command family registers its subcommands on the root app. A
// subcommand's callback runs inside main()'s error handling.
using Registrar = void (*)(CLI::App& app, Context& context);
void register_ledger_commands(CLI::App& app, Context& context);
void register_action_commands(CLI::App& app, Context& context);  // after the ledger's
void register_change_commands(CLI::App& app, Context& context);  // after the ledger's
void register_report_commands(CLI::App& app, Context& context);
void register_intake_commands(CLI::App& app, Context& context);
void register_returns_commands(CLI::App& app, Context& context);
void register_maintenance_commands(CLI::App& app, Context& context);
void register_demo_commands(CLI::App& app, Context& context);
void register_rules_commands(CLI::App& app, Context& context);
void register_backtest_commands(CLI::App& app, Context& context);
void register_sweep_command(CLI::App& app, Context& context);
void register_statement_commands(CLI::App& app, Context& context);
void register_reconcile_commands(CLI::App& app, Context& context);
void register_reference_command(CLI::App& app);  // register last: it reads the others

}  // namespace keel::cli
