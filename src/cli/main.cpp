// keel: the command line. Parses, calls the modules, prints; see cli/context.h.
#include <SQLiteCpp/Exception.h>
#include <fmt/format.h>

#include <CLI/CLI.hpp>
#include <cstdio>

#include "cli/context.h"
#include "core/error.h"
#include "core/text.h"

namespace {

void report_error(std::string_view message) {
  std::fputs(fmt::format("keel: error: {}\n", keel::printable(message)).c_str(), stderr);
}

}  // namespace

int main(int argc, char** argv) {
  keel::cli::Context context;
  CLI::App app{
      "keel: an exact ledger of your own accounts, with rule-based monthly rebalancing, "
      "back-tests and year-end statements.",
      "keel"};
  app.require_subcommand(1);
  app.option_defaults()->always_capture_default();
  app.set_version_flag("--version", "keel 0.1.0");
  app.add_option("--db", context.db_path,
                 "Ledger file (default $XDG_DATA_HOME/keel/keel.db, else "
                 "~/.local/share/keel/keel.db)")
      ->envname("KEEL_DB");
  app.add_flag("--allow-unsafe-permissions", context.allow_unsafe_permissions,
               "Open a ledger file that other users can write to");

  keel::cli::register_ledger_commands(app, context);
  keel::cli::register_report_commands(app, context);
  keel::cli::register_intake_commands(app, context);
  keel::cli::register_returns_commands(app, context);
  keel::cli::register_maintenance_commands(app, context);
  keel::cli::register_demo_commands(app, context);
  keel::cli::register_rules_commands(app, context);
  keel::cli::register_backtest_commands(app, context);
  keel::cli::register_statement_commands(app, context);
  keel::cli::register_reconcile_commands(app, context);
  keel::cli::register_reference_command(app);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : keel::kExitUsage;
  } catch (const keel::InputError& e) {
    report_error(e.what());
    return keel::kExitInput;
  } catch (const keel::LedgerError& e) {
    report_error(e.what());
    return keel::kExitLedger;
  } catch (const SQLite::Exception& e) {
    report_error(fmt::format("ledger database: {}", e.what()));
    return keel::kExitLedger;
  } catch (const std::exception& e) {
    report_error(fmt::format("internal error (please report): {}", e.what()));
    return keel::kExitInternal;
  }
  return 0;
}
