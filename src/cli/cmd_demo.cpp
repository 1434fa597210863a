// keel demo: a fresh ledger holding the invented scenario of examples/demo
// (built into keel, or a folder given with --data), then a month in its life
// shown through keel's own commands.
#include <fmt/format.h>
#include <stdlib.h>

#include <cstdio>
#include <memory>
#include <stdexcept>
#include <system_error>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "io/demo.h"
#include "io/errors.h"
#include "report/statement_forms.h"

namespace keel::cli {
namespace {
namespace fs = std::filesystem;

// One report of the demo: a heading, the command family that provides it,
// its arguments ({last_day}, {month_start}, {year}, {benchmark},
// {first_day}, {ledger_dir} and {rule} are filled in; see io/demo.h), and the
// arguments added when Chromium is on PATH (the PDF is printed with it).
struct DemoStep {
  const char* heading;
  Registrar family;
  std::vector<std::string> args;
  std::vector<std::string> with_chromium = {};
};

// EXTENSION POINT: the demo's reports, in order. A new report is one line
// here.
const std::vector<DemoStep>& demo_steps() {
  static const std::vector<DemoStep> steps = {
      {"The last month's transactions",
       register_report_commands,
       {"history", "--from", "{month_start}", "--to", "{last_day}"}},
      {"Holdings on the last day", register_report_commands, {"holdings", "--as-of", "{last_day}"}},
      {"The year's returns against the benchmark",
       register_returns_commands,
       {"returns", "--year", "{year}", "--benchmark", "{benchmark}"}},
      {"Next month's proposal under the example rule",
       register_rules_commands,
       {"propose", "--rule", "{rule}", "--as-of", "{last_day}"}},
      {"The year-end statement",
       register_statement_commands,
       {"statement", "--year", "{year}", "--benchmark", "{benchmark}", "--html",
        "{ledger_dir}/statement-{year}.html"},
       {"--pdf", "{ledger_dir}/statement-{year}.pdf"}},
  };
  return steps;
}

struct DemoOptions {
  std::string dir, data;
};

// Runs one step as its command would run from the command line, on the demo
// ledger. A step that does not parse is a bug in the list above.
void run_step(const DemoStep& step, const Context& base, const fs::path& ledger,
              const io::DemoScenario& scenario) {
  Context ctx;
  ctx.db_path = ledger.string();
  ctx.allow_unsafe_permissions = base.allow_unsafe_permissions;
  CLI::App app{"keel demo step", "keel"};
  app.option_defaults()->always_capture_default();
  register_ledger_commands(app, ctx);  // other families add to its 'account' and 'security'
  if (step.family != register_ledger_commands) step.family(app, ctx);
  auto wanted = step.args;
  if (!step.with_chromium.empty() && report::find_chromium())
    wanted.insert(wanted.end(), step.with_chromium.begin(), step.with_chromium.end());
  const auto args = io::expand_placeholders(wanted, scenario, ledger.parent_path());
  std::vector<std::string> reversed(args.rbegin(), args.rend());  // CLI11 parses from the back
  out(fmt::format("\n== {} (keel {}) ==\n\n", step.heading, fmt::join(args, " ")));
  std::fflush(stdout);
  try {
    app.parse(reversed);
  } catch (const CLI::ParseError& e) {
    throw std::logic_error(fmt::format("demo step '{}': {}", step.heading, e.what()));
  }
}

// The folder for the demo ledger: --dir (created if missing, refused if it
// already holds a ledger, or a rule file when the demo writes one) or a new
// temporary folder. Returns whether it was created here.
bool prepare_dir(fs::path& dir, const std::string& option_value, bool writes_rule) {
  std::error_code ec;
  if (option_value.empty()) {
    std::string pattern = (fs::temp_directory_path() / "keel-demo-XXXXXX").string();
    if (!::mkdtemp(pattern.data()))
      throw InputError(fmt::format("cannot create a temporary folder in {}; give one with --dir",
                                   fs::temp_directory_path().string()));
    dir = pattern;
    return true;
  }
  dir = option_value;
  if (fs::exists(dir / "keel.db", ec))
    throw InputError(fmt::format(
        "--dir: '{}' already holds a ledger (keel.db); the demo starts from an empty folder",
        printable(dir.string())));
  if (writes_rule && fs::exists(dir / "rule.toml", ec))
    throw InputError(fmt::format(
        "--dir: '{}' already holds a rule file (rule.toml); the demo starts from an empty folder",
        printable(dir.string())));
  if (fs::exists(dir, ec)) {
    if (!fs::is_directory(dir, ec))
      throw InputError(fmt::format("--dir: '{}' is not a folder", printable(dir.string())));
    return false;
  }
  if (!fs::create_directories(dir, ec))
    throw InputError(
        fmt::format("--dir: cannot create '{}': {}", printable(dir.string()), ec.message()));
  return true;
}

// Removes what a failed demo wrote: the ledger, the rule file when this demo
// writes one (prepare_dir made sure the folder had none), the folder when it
// made it.
void remove_ledger(const fs::path& dir, bool created, bool writes_rule) {
  std::error_code ec;
  for (const char* suffix : {"", "-wal", "-shm", "-journal"})
    fs::remove(dir / (std::string("keel.db") + suffix), ec);
  if (writes_rule) fs::remove(dir / "rule.toml", ec);
  if (created) fs::remove(dir, ec);  // only if empty
}

void add_demo(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<DemoOptions>();
  auto* cmd = app.add_subcommand(
      "demo",
      "Build a fresh ledger of an invented household and show a month in its life (never "
      "touches your own ledger)");
  add_examples(*cmd, {"keel demo", "keel demo --dir keel-demo"});
  cmd->add_option("--dir", o->dir,
                  "Folder for the demo ledger, created if missing (default: a new temporary "
                  "folder, printed)");
  cmd->add_option("--data", o->data,
                  "Folder holding a scenario's files, laid out as examples/demo/data, with "
                  "its rule in ../rule.toml (default: the scenario built into keel)");
  cmd->callback([&ctx, o] {
    const auto scenario =
        o->data.empty() ? io::built_in_scenario() : io::load_scenario(o->data, "--data");
    fs::path dir;
    const bool created = prepare_dir(dir, o->dir, scenario.built_in());
    const fs::path ledger = dir / "keel.db";
    out(fmt::format("keel demo: {}, {} to {}\n", printable(scenario.household),
                    scenario.first_day.str(), scenario.last_day.str()));
    out(fmt::format("Demo ledger: {}\n", printable(ledger.string())));
    std::fflush(stdout);
    try {
      store::OpenOptions options;
      options.access = store::Access::create;
      options.allow_unsafe_permissions = ctx.allow_unsafe_permissions;
      auto db = store::Database::open(ledger, options);
      for (const auto& d : io::import_scenario(db, scenario))
        out(fmt::format("imported {:<13} {:>7} rows from {}\n", d.what, d.rows,
                        printable(fs::path(d.file).filename().string())));
      if (scenario.built_in()) {
        OutputFile rule(scenario.rule_file(dir), {"--dir"});
        rule.write(io::built_in_rule());
        rule.commit();
      }
    } catch (const io::ImportRefused& e) {
      for (const auto& line : e.lines()) std::fputs((line + "\n").c_str(), stderr);
      remove_ledger(dir, created, scenario.built_in());
      throw;
    } catch (...) {
      remove_ledger(dir, created, scenario.built_in());
      throw;
    }
    for (const auto& step : demo_steps()) run_step(step, ctx, ledger, scenario);
    out("\n");
    out(std::string(io::kDemoCautions));
    out(fmt::format("\nThe demo ledger stays at {}; look around with keel --db {} ...\n",
                    printable(ledger.string()), printable(ledger.string())));
  });
}

}  // namespace

void register_demo_commands(CLI::App& app, Context& ctx) {
  add_demo(app, ctx);
}

}  // namespace keel::cli
