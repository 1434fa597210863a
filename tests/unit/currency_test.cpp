// The ledger's own currency, and reports that must not add amounts of two currencies.
#include <SQLiteCpp/Database.h>
#include <doctest/doctest.h>
#include <sys/stat.h>
#include <unistd.h>

#include <filesystem>

#include "ledger/accounts.h"
#include "ledger_fixture.h"
#include "perf/returns_report.h"
#include "store/migrations.h"

using namespace keel;
using namespace keel::testing;

namespace {

Account account(const std::string& name, const std::string& currency = "") {
  Account a;
  a.name = name;
  a.currency = currency;
  return a;
}

}  // namespace

TEST_CASE("regression: an account added without a currency silently became USD") {
  store::Database db = store::Database::in_memory();
  const std::string before = store::content_dump(db);
  CHECK(error_of([&] { ledger::add_account(db, account("Main")); }) ==
        "account add: this ledger has no currency yet; give --currency (such as --currency "
        "EUR), or record one for the ledger with 'keel init --currency CODE'");
  CHECK(store::content_dump(db) == before);
}

TEST_CASE("currency: the first account's currency becomes the ledger's, and later ones take it") {
  store::Database db = store::Database::in_memory();
  CHECK_FALSE(store::ledger_currency(db).has_value());
  ledger::add_account(db, account("Main", "EUR"));
  CHECK(store::ledger_currency(db) == std::optional<std::string>("EUR"));
  ledger::add_account(db, account("Second"));
  CHECK(store::find_account(db, "Second")->currency == "EUR");
  // An account in another currency may still be added; it does not move the ledger's.
  ledger::add_account(db, account("Sterling", "GBP"));
  CHECK(store::ledger_currency(db) == std::optional<std::string>("EUR"));
  Security s;
  s.symbol = "ZQA";
  s.name = "Zeqa Alloys";
  ledger::add_security(db, s);
  CHECK(store::find_security(db, "ZQA")->currency == "EUR");
}

TEST_CASE("currency: a security without one is refused while the ledger has none") {
  store::Database db = store::Database::in_memory();
  Security s;
  s.symbol = "ZQA";
  s.name = "Zeqa Alloys";
  CHECK(error_of([&] { ledger::add_security(db, s); }) ==
        "security add: this ledger has no currency yet; give --currency (such as --currency "
        "EUR), or record one for the ledger with 'keel init --currency CODE'");
}

TEST_CASE("currency: the ledger's currency is set once") {
  store::Database db = store::Database::in_memory();
  store::set_ledger_currency(db, "CHF");
  CHECK_NOTHROW(store::set_ledger_currency(db, "CHF"));
  CHECK(error_of([&] { store::set_ledger_currency(db, "EUR"); }) ==
        "the ledger's currency is CHF; it is set once and never changed (keel does not convert "
        "amounts already booked)");
  CHECK_THROWS_AS(db.sql().exec("UPDATE ledger_setting SET currency = 'EUR'"), SQLite::Exception);
  CHECK_THROWS_AS(db.sql().exec("DELETE FROM ledger_setting"), SQLite::Exception);
}

TEST_CASE("currency: a version-2 ledger takes its accounts' one currency, mixed ones none") {
  const auto dir =
      std::filesystem::temp_directory_path() / ("keel-currency-test-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  auto version2 = [&](const std::string& name, std::vector<std::string> currencies) {
    const auto file = dir / name;
    {
      SQLite::Database raw(file.string(), SQLite::OPEN_READWRITE | SQLite::OPEN_CREATE);
      for (const auto& m : store::migrations())
        if (m.version <= 2) raw.exec(std::string(m.sql));
      int n = 0;
      for (const auto& c : currencies)
        raw.exec("INSERT INTO account (name, currency, created_at) VALUES ('A" +
                 std::to_string(++n) + "', '" + c + "', 'x')");
      raw.exec("PRAGMA user_version = 2");
    }
    ::chmod(file.c_str(), 0600);
    auto db = store::Database::open(file);
    return store::ledger_currency(db);
  };
  CHECK(version2("one.db", {"EUR", "EUR"}) == std::optional<std::string>("EUR"));
  CHECK_FALSE(version2("mixed.db", {"EUR", "USD"}).has_value());
  CHECK_FALSE(version2("empty.db", {}).has_value());
  std::filesystem::remove_all(dir);
}

TEST_CASE("regression: holdings and returns added cash of USD and EUR accounts without a word") {
  LedgerFixture f;
  f.account("Main");  // USD
  ledger::add_account(f.db, account("Euro", "EUR"));
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "100");
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "100");
  const std::string mixed =
      ": the accounts keep different currencies (Euro: EUR; Main: USD) and keel does not convert "
      "between them yet; give --account for one account";
  // Without a reporting currency the household's holdings are refused; with
  // one, the other account's cash needs a rate, which this ledger lacks.
  CHECK(error_of([&] { ledger::holdings(f.db, day("2024-12-31")); }) == "holdings" + mixed);
  CHECK(error_of([&] {
          ledger::holdings(f.db, day("2024-12-31"), std::nullopt, std::string("EUR"));
        }).find("holdings: cash in USD: no exchange rate for EUR/USD on or before 2024-12-31") ==
        0);
  CHECK(error_of([&] {
          perf::returns_report(f.db, perf::ReturnsRequest{});
        }).find("no exchange rate for ") == 0);
  CHECK(ledger::holdings(f.db, day("2024-12-31"), std::string("Euro")).total_value == dec("100"));
}

TEST_CASE("currency: gains are refused only when the sales span accounts of two currencies") {
  LedgerFixture f;
  f.account("Main");
  ledger::add_account(f.db, account("Euro", "EUR"));
  f.security("ALFA");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "100");
  f.buy("2024-01-03", "Main", "ALFA", "1", "10");
  f.sell("2024-02-03", "Main", "ALFA", "1", "12");
  CHECK(f.gains().size() == 1);  // only Main sold: one currency
  Security e;
  e.symbol = "BETA";
  e.name = "Beta (invented)";
  e.currency = "EUR";
  store::insert_security(f.db, e);
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "100");
  f.buy("2024-01-03", "Euro", "BETA", "1", "10");
  f.sell("2024-02-03", "Euro", "BETA", "1", "12");
  CHECK(error_of([&] { f.gains(); }) ==
        "gains: the accounts keep different currencies (Euro: EUR; Main: USD) and keel does not "
        "convert between them yet; give --account for one account");
  CHECK(ledger::realized_gains(f.db, std::nullopt, std::string("Euro")).size() == 1);
}
