// keel: the command line. Parses, calls the modules, prints; see cli/context.h.
#include <fmt/format.h>

#include <CLI/CLI.hpp>
#include <csignal>
#include <cstdio>
#include <string_view>
#include <vector>

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

using keel::cli::Registrar;

// The command families in the order they register (the order of `keel
// --help`), each with the commands it adds at the top, or adds to
// (extends_ledger: 'account', 'security' or 'record' of the ledger's), as
// words between spaces. tests/e2e/test_command_line.py proves the table:
// every command's --help, built from its families, is `keel help`'s, built
// from all of them.
struct Family {
  Registrar add;
  std::string_view commands;
  bool extends_ledger = false;
};
constexpr Family kFamilies[] = {
    {keel::cli::register_ledger_commands, " init void confirm account security record "},
    {keel::cli::register_action_commands, " action record ", true},
    {keel::cli::register_change_commands, " changes account security ", true},
    {keel::cli::register_report_commands, " holdings lots gains history account security ", true},
    {keel::cli::register_intake_commands, " import export imports "},
    {keel::cli::register_returns_commands, " returns "},
    {keel::cli::register_maintenance_commands, " verify backup restore "},
    {keel::cli::register_demo_commands, " demo "},
    {keel::cli::register_rules_commands, " propose proposals "},
    {keel::cli::register_backtest_commands, " backtest compare signal "},
    {keel::cli::register_sweep_command, " sweep "},
    {keel::cli::register_statement_commands, " statement "},
    {keel::cli::register_reconcile_commands, " reconcile reopen "},
};

// Whether `word` is one of the words of `list` (as kFamilies holds them).
bool listed(std::string_view list, std::string_view word) {
  for (auto at = list.find(word); at != std::string_view::npos; at = list.find(word, at + 1))
    if (list[at - 1] == ' ' && at + word.size() < list.size() && list[at + word.size()] == ' ')
      return true;
  return false;
}

// Which families a command line needs. Building every command costs more
// than most commands do, so a line that names a command (after global
// options only) gets the families of that command, and a lone --version
// none; anything else (help, the reference, no command, a word keel does
// not know) gets all of them, with the commands that read the whole tree.
// `all` says whether every family is meant.
std::vector<const Family*> families_for(int argc, char** argv, bool& all) {
  all = false;
  int i = 1;
  while (i < argc) {
    const std::string_view a = argv[i];
    if (a == "--db")
      i += 2;
    else if (a.starts_with("--db=") || a == "--allow-unsafe-permissions" || a == "--no-pager")
      ++i;
    else
      break;
  }
  std::vector<const Family*> chosen;
  if (i >= argc) {
    all = true;
    return chosen;
  }
  const std::string_view word = argv[i];
  if (word == "--version" && i + 1 == argc) return chosen;
  bool needs_ledger = false;
  if (!word.empty() && word.find(' ') == std::string_view::npos)
    for (const auto& f : kFamilies)
      if (listed(f.commands, word)) {
        chosen.push_back(&f);
        needs_ledger = needs_ledger || f.extends_ledger;
      }
  if (chosen.empty()) {
    all = true;
    return chosen;
  }
  if (needs_ledger && chosen.front() != &kFamilies[0]) chosen.insert(chosen.begin(), &kFamilies[0]);
  return chosen;
}

// Sent up when a command line built with some families only did not parse:
// it is parsed again with all of them, so that every message (and every
// suggestion of a command) is the one the whole tree gives. Nothing has run
// then: CLI11 reports parse errors before it runs any callback.
struct ParseAgain {};

int run(int argc, char** argv, bool everything) {
  bool all = true;
  std::vector<const Family*> chosen;
  if (!everything) chosen = families_for(argc, argv, all);
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

  if (all) {
    for (const auto& f : kFamilies) f.add(app, context);
    keel::cli::register_reference_command(app);
  } else {
    for (const auto* f : chosen) f->add(app, context);
  }
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
    // Help and the version are answered by the families built; any other
    // refusal by all of them.
    if (!all && e.get_exit_code() != 0) throw ParseAgain{};
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

}  // namespace

int main(int argc, char** argv) {
  try {
    return run(argc, argv, false);
  } catch (const ParseAgain&) {
    return run(argc, argv, true);
  }
}
