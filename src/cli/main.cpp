// keel: the command line. Parses, calls the modules, prints; see cli/context.h.
#include <fmt/format.h>

#include <CLI/CLI.hpp>
#include <csignal>
#include <cstdio>

#include "cli/context.h"
#include "cli/mistakes.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "store/sqlite_error.h"

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
  // Options a command does not know go up to the commands above it, so the
  // global options may follow the command too: keel holdings --db x.db.
  app.fallthrough();
  app.option_defaults()->always_capture_default();
  app.set_version_flag("--version", "keel 0.1.0");
  app.add_option("--db", context.db_path,
                 "Ledger file (default $XDG_DATA_HOME/keel/keel.db, else "
                 "~/.local/share/keel/keel.db)")
      ->envname("KEEL_DB");
  app.add_flag("--allow-unsafe-permissions", context.allow_unsafe_permissions,
               "Open a ledger file that other users can write to");
  app.add_flag("--no-pager", context.no_pager,
               "Print long output directly instead of through $PAGER (default 'less -FRX'); "
               "output that is not to a terminal is never paged");

  keel::cli::register_ledger_commands(app, context);
  keel::cli::register_action_commands(app, context);
  keel::cli::register_change_commands(app, context);
  keel::cli::register_report_commands(app, context);
  keel::cli::register_intake_commands(app, context);
  keel::cli::register_returns_commands(app, context);
  keel::cli::register_maintenance_commands(app, context);
  keel::cli::register_demo_commands(app, context);
  keel::cli::register_rules_commands(app, context);
  keel::cli::register_backtest_commands(app, context);
  keel::cli::register_sweep_command(app, context);
  keel::cli::register_statement_commands(app, context);
  keel::cli::register_reconcile_commands(app, context);
  keel::cli::register_reference_command(app);
  // Before any command runs: no file keel writes may be the ledger.
  app.parse_complete_callback([&context] {
    keel::protect_from_output(context.ledger_path());
    if (!context.no_pager) keel::cli::hold_output_for_pager();
  });
  // A file size limit (ulimit -f) then fails a write with EFBIG, reported like
  // a full disk, instead of killing keel mid-write.
  std::signal(SIGXFSZ, SIG_IGN);
  // Set last: commands added before would inherit it.
  keel::cli::add_examples(app, {"keel demo", "keel help record buy"});

  // Leaving the try block by an exception prints held text as it is, before
  // the error message.
  struct ReleaseOnError {
    ~ReleaseOnError() { keel::cli::release_held_output(); }
  };
  try {
    ReleaseOnError release;
    app.parse(argc, argv);
    keel::cli::finish_output();
  } catch (const CLI::ParseError& e) {
    if (dynamic_cast<const CLI::ExtrasError*>(&e) || dynamic_cast<const CLI::RequiredError*>(&e))
      if (const auto why =
              keel::cli::explain_refusal(app, std::vector<std::string>(argv + 1, argv + argc))) {
        std::fputs(fmt::format("keel: error: {}\n", *why).c_str(), stderr);
        return keel::kExitUsage;
      }
    const int code = app.exit(e);
    return code == 0 ? 0 : keel::kExitUsage;
  } catch (const keel::cli::UsageError& e) {
    std::fputs(fmt::format("keel: error: {}\n", e.what()).c_str(), stderr);
    return keel::kExitUsage;
  } catch (const keel::InputError& e) {
    report_error(e.what());
    return keel::kExitInput;
  } catch (const keel::LedgerError& e) {
    report_error(e.what());
    return keel::kExitLedger;
  } catch (const std::exception& e) {
    if (const auto escaped = keel::store::escaped_ledger_error(e)) {
      report_error(escaped->what());
      return keel::kExitLedger;
    }
    report_error(fmt::format("internal error (please report): {}", e.what()));
    return keel::kExitInternal;
  }
  return 0;
}
