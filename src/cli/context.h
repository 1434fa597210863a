// What every command shares: the global options and how to reach the ledger.
// Commands only parse, call a module, and print; no ledger logic lives here.
#pragma once

#include <CLI/CLI.hpp>
#include <cstdio>
#include <filesystem>
#include <functional>
#include <string>

#include "io/errors.h"
#include "store/database.h"

namespace keel::cli {

struct Context {
  std::string db_path;  // --db / KEEL_DB; empty means the default location
  bool allow_unsafe_permissions = false;

  std::filesystem::path ledger_path() const;
  // Reports read (and still work where the ledger cannot be written);
  // commands that change it ask for Access::write, init for Access::create.
  store::Database open_ledger(store::Access access = store::Access::read) const;
  bool colour() const;  // stdout is a terminal and NO_COLOR is not set
};

// Prints text to stdout exactly as given; a failed write is an InputError
// ("cannot write to standard output: disk full").
void out(const std::string& text);
// Flushes stdout at the end of a command, with the same error.
void finish_output();

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
void register_statement_commands(CLI::App& app, Context& context);
void register_reconcile_commands(CLI::App& app, Context& context);
void register_reference_command(CLI::App& app);  // register last: it reads the others

}  // namespace keel::cli
