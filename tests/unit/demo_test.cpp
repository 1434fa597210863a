// The demo scenario module: locating the scenario, reading scenario.toml with
// located errors, importing in order, and filling in step arguments.
#include "io/demo.h"

#include <doctest/doctest.h>

#include <fstream>
#include <iterator>
#include <stdexcept>

#include "core/error.h"
#include "io/demo_data.h"
#include "io/errors.h"
#include "ledger/holdings.h"
#include "store/ledger_store.h"
#include "test_files.h"

using keel::Date;
using keel::Decimal;
using keel::InputError;
using keel::io::DemoScenario;
using keel::io::expand_placeholders;
using keel::io::import_scenario;
using keel::io::load_scenario;

namespace {

const char* kToml =
    "household = \"the Pellow household (invented)\"\n"
    "first_day = \"2024-01-02\"\n"
    "last_day = \"2024-03-28\"\n"
    "benchmark = \"QZIX\"\n"
    "accounts = [\"Pellow Taxable\"]\n";

// A tiny scenario in keel's layouts; `transactions` replaces its transactions.
struct Scenario {
  keel::test::TempDir dir;
  explicit Scenario(const std::string& transactions =
                        "date,account,kind,symbol,quantity,price,amount,fee,ref\n"
                        "2024-01-02,Pellow Taxable,deposit,,,,1000,,P-1\n"
                        "2024-01-03,Pellow Taxable,buy,QVNA,10,20,,1,P-2\n"
                        "2024-02-15,Pellow Taxable,dividend,QVNA,,,4,,P-3\n"
                        "2024-02-15,Pellow Taxable,tax,QVNA,,,0.6,,P-4\n",
                    const std::string& toml = kToml) {
    dir.write("scenario.toml", toml);
    dir.write("accounts.csv", "name,currency\nPellow Taxable,USD\n");
    dir.write("securities.csv",
              "symbol,name,kind,currency\nQVNA,Quvana Works,stock,USD\nQZIX,Quzel Index,index,"
              "USD\n");
    dir.write("prices.csv",
              "date,symbol,close\n2024-01-02,QVNA,20\n2024-03-28,QVNA,22.5\n2024-01-02,QZIX,100\n");
    dir.write("rates.csv", "date,base,quote,rate\n2024-01-02,EUR,USD,1.0931\n");
    dir.write("metrics.csv",
              "date,symbol,metric,value,known_on\n2023-12-31,QVNA,pe,-4.5,2024-02-05\n");
    dir.write("distributions.csv",
              "ex_date,pay_date,symbol,per_share\n2024-02-01,2024-02-15,QVNA,0.4\n");
    dir.write("splits.csv", "date,symbol,ratio\n2024-03-01,QVNA,2\n");
    dir.write("transactions.csv", transactions);
  }
  std::string path(const std::string& name = "") const {
    return name.empty() ? dir.path().string() : (dir.path() / name).string();
  }
};

std::string message_of_load(const Scenario& s) {
  try {
    load_scenario(s.dir.path(), "--data");
  } catch (const InputError& e) {
    return e.what();
  }
  return "accepted";
}

}  // namespace

TEST_CASE("demo: scenario.toml is read into the scenario") {
  Scenario s;
  const DemoScenario sc = load_scenario(s.dir.path(), "--data");
  CHECK(sc.household == "the Pellow household (invented)");
  CHECK(sc.first_day == Date::parse("2024-01-02"));
  CHECK(sc.last_day == Date::parse("2024-03-28"));
  CHECK(sc.benchmark == "QZIX");
  CHECK(sc.accounts == std::vector<std::string>{"Pellow Taxable"});
}

TEST_CASE("demo: a folder that does not exist is named with the option") {
  try {
    load_scenario("/nonexistent/keel-demo", "--data");
    FAIL("accepted");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()) ==
          "--data: '/nonexistent/keel-demo' is not a folder holding the demo scenario");
  }
}

TEST_CASE("demo: a missing scenario file is named") {
  Scenario s;
  std::filesystem::remove(s.dir.path() / "distributions.csv");
  CHECK(message_of_load(s) == "--data: '" + s.path() +
                                  "' has no distributions.csv (run examples/demo/generate.py to "
                                  "write it)");
}

TEST_CASE("demo: an unknown key in scenario.toml is named with its line") {
  Scenario s;
  s.dir.write("scenario.toml", std::string(kToml) + "colour = \"teal\"\n");
  CHECK(message_of_load(s) == s.path("scenario.toml") +
                                  ":6: key 'colour': unknown key; expected one of: household, "
                                  "first_day, last_day, benchmark, accounts");
}

TEST_CASE("demo: a bad date in scenario.toml is named with its line and key") {
  Scenario s;
  s.dir.write("scenario.toml",
              "household = \"h\"\nfirst_day = \"2024-01-02\"\nlast_day = \"2024-02-30\"\n"
              "benchmark = \"QZIX\"\naccounts = [\"Pellow Taxable\"]\n");
  CHECK(message_of_load(s) ==
        s.path("scenario.toml") + ":3: key 'last_day': '2024-02-30' is not a calendar date");
}

TEST_CASE("demo: a missing key in scenario.toml is named") {
  Scenario s;
  s.dir.write("scenario.toml", "household = \"h\"\nfirst_day = \"2024-01-02\"\n");
  CHECK(message_of_load(s) == s.path("scenario.toml") + ": key 'last_day' is missing");
}

TEST_CASE("demo: the files import in order and the ledger holds their story") {
  Scenario s;
  auto db = keel::store::Database::in_memory();
  const auto done = import_scenario(db, load_scenario(s.dir.path(), "--data"));
  REQUIRE(done.size() == 8);
  std::vector<std::string> order;
  for (const auto& d : done) order.push_back(d.what);
  CHECK(order == std::vector<std::string>{"accounts", "securities", "prices", "fx", "metrics",
                                          "distributions", "splits", "transactions"});
  CHECK(done[2].rows == 3);
  CHECK(done[3].rows == 1);
  CHECK(done[7].added == 4);
  // 1000 - (10 x 20 + 1) + 4 - 0.6 = 802.4 cash; the split doubles 10 units to 20 at 22.5.
  const auto h = keel::ledger::holdings(db, Date::parse("2024-03-28"));
  REQUIRE(h.positions.size() == 1);
  CHECK(h.positions[0].quantity == Decimal::parse("20"));
  CHECK(h.cash[0].amount == Decimal::parse("802.4"));
  CHECK(h.total_value == Decimal::parse("1252.4"));
}

TEST_CASE("demo: a refused transactions file passes through, earlier files stay") {
  Scenario s(
      "date,account,kind,symbol,quantity,price,amount,fee,ref\n"
      "2024-01-02,Pellow Taxable,deposit,,,,100,,P-1\n"
      "2024-01-03,Pellow Taxable,buy,QVNA,10,20,,1,P-2\n");
  auto db = keel::store::Database::in_memory();
  const auto scenario = load_scenario(s.dir.path(), "--data");
  try {
    import_scenario(db, scenario);
    FAIL("accepted");
  } catch (const keel::io::ImportRefused& e) {
    REQUIRE(e.lines().size() == 1);
    CHECK(e.lines()[0] ==
          "cash in 'Pellow Taxable' would be -101 at the end of 2024-01-03 (after " +
              s.path("transactions.csv") +
              ":3: buy on 2024-01-03 in 'Pellow Taxable'); the account does not "
              "allow negative cash");
  }
  CHECK(keel::store::list_transactions(db).empty());
}

TEST_CASE("demo: step arguments take the scenario's values") {
  Scenario s;
  const auto sc = load_scenario(s.dir.path(), "--data");
  CHECK(expand_placeholders({"history", "--from", "{month_start}", "--to", "{last_day}"}, sc) ==
        std::vector<std::string>{"history", "--from", "2024-03-01", "--to", "2024-03-28"});
  CHECK(expand_placeholders({"--year={year}", "{benchmark}-{first_day}"}, sc) ==
        std::vector<std::string>{"--year=2024", "QZIX-2024-01-02"});
}

TEST_CASE("demo: a step naming no scenario value is a bug") {
  Scenario s;
  const auto sc = load_scenario(s.dir.path(), "--data");
  CHECK_THROWS_AS(expand_placeholders({"{tomorrow}"}, sc), std::logic_error);
  CHECK_THROWS_AS(expand_placeholders({"{last_day"}, sc), std::logic_error);
}

TEST_CASE("demo: the {rule} of a scenario folder is rule.toml beside it") {
  Scenario s;
  const auto sc = load_scenario(s.dir.path(), "--data");
  CHECK(expand_placeholders({"--rule", "{rule}"}, sc, "/tmp/ledger") ==
        std::vector<std::string>{"--rule", s.path() + "/../rule.toml"});
}

TEST_CASE("demo: the built-in scenario's {rule} is written beside the demo ledger") {
  const auto sc = keel::io::built_in_scenario();
  CHECK(sc.built_in());
  CHECK(expand_placeholders({"--rule", "{rule}"}, sc, "/tmp/ledger") ==
        std::vector<std::string>{"--rule", "/tmp/ledger/rule.toml"});
}

TEST_CASE("demo: the built-in files are examples/demo's, byte for byte") {
  const std::filesystem::path demo = std::filesystem::path(KEEL_SOURCE_DIR) / "examples" / "demo";
  std::vector<std::string> names;
  for (const auto& f : keel::io::embedded_demo_files()) {
    names.emplace_back(f.name);
    const auto path = f.name == "rule.toml" ? demo / f.name : demo / "data" / f.name;
    std::ifstream in(path, std::ios::binary);
    REQUIRE_MESSAGE(in, path.string());
    const std::string committed{std::istreambuf_iterator<char>(in), {}};
    CHECK_MESSAGE(committed == f.text, f.name);
  }
  CHECK(names == std::vector<std::string>{"accounts.csv", "distributions.csv", "metrics.csv",
                                          "prices.csv", "rates.csv", "scenario.toml",
                                          "securities.csv", "splits.csv", "transactions.csv",
                                          "rule.toml"});
}

TEST_CASE("demo: the built-in scenario reads and imports without any file") {
  const auto sc = keel::io::built_in_scenario();
  CHECK(sc.household == "the Ardwyn household of Thistlecombe (invented)");
  CHECK(sc.last_day == Date::parse("2025-12-31"));
  CHECK(sc.benchmark == "ZXTR");
  auto db = keel::store::Database::in_memory();
  const auto done = import_scenario(db, sc);
  REQUIRE(done.size() == 8);
  CHECK(done[0].file == "built-in demo data/accounts.csv");
  CHECK(done[3].file == "built-in demo data/rates.csv");
  CHECK(done[7].file == "built-in demo data/transactions.csv");
  CHECK(done[7].rows == 2135);
  CHECK(keel::store::list_transactions(db).size() == 2136);
}
