// The invented demo scenario (examples/demo): the copy built into keel or a
// folder of its files, reading its scenario.toml, and loading it into a fresh
// ledger through the ordinary importers.
//
// Contract
//  - kDemoFiles lists the scenario's CSV files in import order: accounts,
//    securities, prices, fx (exchange rates, rates.csv; before the
//    transactions, whose rows in other currencies need them), metrics,
//    distributions, splits, transactions.
//  - built_in_scenario() reads the scenario compiled into keel (io/demo_data.h);
//    its files are named "built-in demo data/<file>" in messages and the
//    import log.
//  - load_scenario(dir, option) checks that dir is a folder holding
//    scenario.toml and every CSV file, and reads scenario.toml (keys
//    household, first_day, last_day, benchmark, accounts; no others). Throws
//    InputError naming `option` (the flag the folder came from) and the
//    missing file, or naming scenario.toml's line and key for a bad value.
//  - import_scenario(db, scenario) imports every file in order (from the
//    folder, or the built-in bytes), each in its own write transaction (io::import_accounts,
//    import_market, import_transactions). An importer's ImportRefused or InputError passes through
//    unchanged; files imported before it stay in the ledger, so callers give it a ledger of their
//    own (the demo's fresh one).
//  - expand_placeholders() replaces {first_day}, {last_day}, {month_start}
//    (first day of last_day's month), {year} (last_day's year), {benchmark},
//    {ledger_dir} and {rule} in each argument; any other {name} is a
//    logic_error (a wrong step list is a bug, not a user mistake).
//  - rule_file(): the example rule of a scenario folder is rule.toml beside
//    it (DIR/../rule.toml); the built-in scenario's rule is written by the
//    demo beside its ledger (LEDGER_DIR/rule.toml, text from
//    built_in_rule()).
#pragma once

#include <array>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "store/database.h"

namespace keel::io {

struct DemoFile {
  std::string_view what;  // the importer: accounts, securities, ..., transactions
  std::string_view file;  // file name inside the scenario folder
};
inline constexpr std::array<DemoFile, 8> kDemoFiles{{{"accounts", "accounts.csv"},
                                                     {"securities", "securities.csv"},
                                                     {"prices", "prices.csv"},
                                                     {"fx", "rates.csv"},
                                                     {"metrics", "metrics.csv"},
                                                     {"distributions", "distributions.csv"},
                                                     {"splits", "splits.csv"},
                                                     {"transactions", "transactions.csv"}}};

struct DemoScenario {
  std::filesystem::path dir;  // the scenario folder; empty for the built-in scenario
  std::string household;
  Date first_day;
  Date last_day;
  std::string benchmark;  // symbol of the index the returns are compared with
  std::vector<std::string> accounts;

  bool built_in() const { return dir.empty(); }
  std::filesystem::path rule_file(const std::filesystem::path& ledger_dir) const;
};

DemoScenario load_scenario(const std::filesystem::path& dir, std::string_view option);
DemoScenario built_in_scenario();
std::string_view built_in_rule();  // examples/demo/rule.toml

struct DemoImport {
  std::string what;
  std::string file;
  std::uint64_t rows = 0;
  std::uint64_t added = 0;
};
std::vector<DemoImport> import_scenario(store::Database& db, const DemoScenario& scenario);

// {ledger_dir} is the folder of the demo ledger (for files the demo writes);
// {rule} the scenario's rule_file() there.
std::vector<std::string> expand_placeholders(const std::vector<std::string>& args,
                                             const DemoScenario& scenario,
                                             const std::filesystem::path& ledger_dir = {});

// Printed after the demo's reports.
inline constexpr std::string_view kDemoCautions =
    "Cautions\n"
    "- Everything above is invented: the household, the securities, their prices and figures.\n"
    "- keel records and computes; it gives no investment advice. A rule such as 'hold low P/E "
    "names' can lose money.\n"
    "- Past results, real or simulated, do not predict future returns. A rule tried on past "
    "data tends to overfit that past.\n"
    "- Tax figures (the 15 % withholding here) are illustrations; tax depends on local rules; ask "
    "your tax authority or a licensed professional.\n";

}  // namespace keel::io
