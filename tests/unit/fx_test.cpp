// Foreign currencies: ISO 4217 minor units, exchange rates as known on a day,
// and the lot engine's cost, gains and cash in two currencies.
#include <SQLiteCpp/Database.h>
#include <doctest/doctest.h>
#include <sys/stat.h>
#include <unistd.h>

#include <filesystem>
#include <functional>

#include "core/currency.h"
#include "ledger/fx_cash.h"
#include "ledger_fixture.h"
#include "market/fx_rates.h"
#include "report/statement.h"
#include "store/fx_store.h"
#include "store/migrations.h"

using namespace keel;
using namespace keel::testing;

namespace {

// A euro account, "Euro", and a dollar-listed security, HLX (invented).
struct EuroFixture : LedgerFixture {
  EuroFixture() {
    account("Euro", BasisMethod::fifo, false, "EUR");
    security("HLX");  // the fixture's securities trade in USD
  }
  void rate(const char* date, const char* base, const char* quote, const char* value) {
    store::WriteTransaction tx(db);
    std::string existing;
    store::upsert_fx_rate(db, {base, quote, day(date), dec(value)}, false, existing);
    tx.commit();
  }
  std::int64_t post(ledger::PostRequest r) {
    r.account = r.account.empty() ? "Euro" : r.account;
    return ledger::post(db, r).front();
  }
  ledger::PostRequest trade(TxnKind kind, const char* date, const char* quantity,
                            const char* price) {
    ledger::PostRequest r;
    r.kind = kind;
    r.date = day(date);
    r.symbol = "HLX";
    r.quantity = dec(quantity);
    r.price = dec(price);
    return r;
  }
  ledger::PostRequest cash_row(TxnKind kind, const char* date, const char* amount,
                               const char* currency) {
    ledger::PostRequest r;
    r.kind = kind;
    r.date = day(date);
    r.amount = dec(amount);
    r.currency = currency;
    return r;
  }
};

// The worked example, by hand (rates are USD per EUR):
//   buy  100 HLX at 50.00 USD when 1 EUR = 1.10 USD
//     cost in USD  = 100 x 50.00          = 5000.00 USD
//     cost in EUR  = 5000.00 / 1.10       = 4545.4545... -> 4545.45 EUR
//   sell 100 HLX at 60.00 USD when 1 EUR = 1.20 USD
//     proceeds USD = 100 x 60.00          = 6000.00 USD
//     proceeds EUR = 6000.00 / 1.20       = 5000.00 EUR
//   gain in EUR    = 5000.00 - 4545.45    =  454.55 EUR
//   price part     = (6000.00 - 5000.00) / 1.20 = 833.333... -> 833.33 EUR
//                    (the gain in USD, at the rate of the sale)
//   currency part  = 454.55 - 833.33     = -378.78 EUR
//                    (check: 5000.00 / 1.20 - 4545.45 = 4166.67 - 4545.45 = -378.78)
void check_worked_example(const Book& book) {
  REQUIRE(book.realized().size() == 1);
  const RealizedPart& part = book.realized().front();
  CHECK(part.local_cost == dec("5000.00"));
  CHECK(part.cost == dec("4545.45"));
  CHECK(part.local_proceeds == dec("6000.00"));
  CHECK(part.proceeds == dec("5000.00"));
  CHECK(part.gain() == dec("454.55"));
  CHECK(part.price_part() == dec("833.33"));
  CHECK(part.currency_part() == dec("-378.78"));
}

}  // namespace

TEST_CASE("worked example: a dollar stock in a euro account, settled at the broker's rates") {
  EuroFixture f;
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "10000");
  auto buy = f.trade(TxnKind::buy, "2024-01-10", "100", "50.00");
  buy.rate = dec("1.10");
  f.post(buy);
  CHECK(f.book().account(1).cash == dec("5454.55"));  // 10000 - 4545.45
  auto sell = f.trade(TxnKind::sell, "2024-06-10", "100", "60.00");
  sell.rate = dec("1.20");
  f.post(sell);
  const Book book = f.book();
  check_worked_example(book);
  CHECK(book.account(1).cash == dec("10454.55"));
  CHECK(book.account(1).foreign_cash.empty());
}

TEST_CASE("worked example: the same trades paid from dollar cash at the day's stored rates") {
  EuroFixture f;
  f.rate("2024-01-02", "EUR", "USD", "1.10");
  f.rate("2024-06-10", "EUR", "USD", "1.20");
  f.post(f.cash_row(TxnKind::deposit, "2024-01-02", "5000", "USD"));
  f.post(f.trade(TxnKind::buy, "2024-01-10", "100", "50.00"));  // 1.10 is the latest on the 10th
  f.post(f.trade(TxnKind::sell, "2024-06-10", "100", "60.00"));
  const Book book = f.book();
  check_worked_example(book);
  // The dollars deposited at 1.10 and spent at 1.10: no currency gain on the cash itself.
  REQUIRE(book.fx_realized().size() == 1);
  CHECK(book.fx_realized().front().gain() == dec("0"));
  // The proceeds stay in dollars, carried at their cost in euros.
  CHECK(book.account(1).foreign_balance("USD") == dec("6000"));
  CHECK(book.account(1).foreign_cash.at("USD").front().cost == dec("5000.00"));
  CHECK(book.account(1).cash == dec("0"));
}

TEST_CASE("foreign cash: spending it realizes its currency gain, oldest first under fifo") {
  EuroFixture f;
  f.rate("2024-01-02", "EUR", "USD", "1.25");  // 1000 USD cost 800.00 EUR
  f.rate("2024-02-01", "EUR", "USD", "1.00");  // 1000 USD cost 1000.00 EUR
  f.rate("2024-03-01", "EUR", "USD", "1.10");
  f.post(f.cash_row(TxnKind::deposit, "2024-01-02", "1000", "USD"));
  f.post(f.cash_row(TxnKind::deposit, "2024-02-01", "1000", "USD"));
  // 1100 USD withdrawn at 1.10: worth 1000.00 EUR; the first 1000 cost 800.00,
  // the next 100 cost 100.00: gains 109.09 (909.09 - 800) and -9.09 (90.91 - 100).
  f.post(f.cash_row(TxnKind::withdrawal, "2024-03-01", "1100", "USD"));
  const Book book = f.book();
  REQUIRE(book.fx_realized().size() == 2);
  CHECK(book.fx_realized()[0].quantity == dec("1000"));
  CHECK(book.fx_realized()[0].cost == dec("800.00"));
  CHECK(book.fx_realized()[0].proceeds == dec("909.09"));
  CHECK(book.fx_realized()[1].quantity == dec("100"));
  CHECK(book.fx_realized()[1].cost == dec("100.00"));
  CHECK(book.fx_realized()[1].proceeds == dec("90.91"));
  CHECK(book.account(1).foreign_balance("USD") == dec("900"));
  CHECK(book.account(1).foreign_cash.at("USD").front().cost == dec("900.00"));
}

// Worked example, by hand (rates are USD per EUR): 1000 USD deposited in
// "Euro" when 1 EUR = 1.25 USD cost 800.00 EUR; on 2024-06-03, when
// 1 EUR = 1.00 USD, they move to "Second", worth 1000.00 EUR that day.
//   Euro:   0 + deposits 800.00 - transfers out 800.00 (at cost)      = 0.00
//   Second: 0 + transfers in 800.00 (at cost) + unrealized currency
//           gain 200.00 (1000.00 worth - 800.00 cost)                  = 1000.00
//   all:    0 + deposits 800.00 + unrealized currency gain 200.00      = 1000.00
// At the day's worth (1000.00) the transfer would make Euro miss its
// closing value by 200.00 and Second by -200.00.
TEST_CASE("statement: foreign cash transferred between accounts moves at its cost") {
  EuroFixture f;
  f.account("Second", BasisMethod::fifo, false, "EUR");
  f.rate("2024-01-02", "EUR", "USD", "1.25");
  f.rate("2024-06-03", "EUR", "USD", "1.00");
  f.post(f.cash_row(TxnKind::deposit, "2024-01-02", "1000", "USD"));
  auto move = f.cash_row(TxnKind::transfer_out, "2024-06-03", "1000", "USD");
  move.to_account = "Second";
  f.post(move);
  CHECK(f.book().fx_realized().empty());
  report::StatementRequest r;
  r.year = 2024;
  r.account = "Euro";
  const auto euro = report::build_statement(f.db, r).summary;
  CHECK(euro.deposits == dec("800.00"));
  CHECK(euro.transfers_out == dec("800.00"));
  CHECK(euro.fx_cash_realized == Decimal());
  CHECK(euro.closing_value == Decimal());
  CHECK(euro.difference() == Decimal());
  r.account = "Second";
  const auto second = report::build_statement(f.db, r).summary;
  CHECK(second.transfers_in == dec("800.00"));
  CHECK(second.fx_cash_unrealized_closing == dec("200.00"));
  CHECK(second.closing_value == dec("1000.00"));
  CHECK(second.difference() == Decimal());
  r.account.reset();
  const auto all = report::build_statement(f.db, r).summary;
  CHECK(all.transfers_in == Decimal());
  CHECK(all.transfers_out == Decimal());
  CHECK(all.fx_cash_unrealized_closing == dec("200.00"));
  CHECK(all.closing_value == dec("1000.00"));
  CHECK(all.difference() == Decimal());
}

TEST_CASE("exchange: euros into dollars at the broker's rate, the fee in euros") {
  EuroFixture f;
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "3000");
  auto x = f.cash_row(TxnKind::exchange, "2024-01-03", "2000", "EUR");
  x.to_currency = "USD";
  x.rate = dec("1.0875");
  x.fee = dec("2.50");
  f.post(x);
  const Book book = f.book();
  CHECK(book.account(1).cash == dec("997.50"));                     // 3000 - 2000 - 2.50
  CHECK(book.account(1).foreign_balance("USD") == dec("2175.00"));  // 2000 x 1.0875
  CHECK(book.account(1).foreign_cash.at("USD").front().cost == dec("2002.50"));
}

TEST_CASE("dividend and withholding in dollars: kept as dollars, or settled at the row's rate") {
  EuroFixture f;
  f.rate("2024-01-02", "EUR", "USD", "1.10");
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "100");
  f.cash(TxnKind::dividend, "2024-03-01", "Euro", "55", "HLX");  // the security's currency
  f.cash(TxnKind::tax, "2024-03-01", "Euro", "8.25", "HLX");
  auto settled = f.cash_row(TxnKind::dividend, "2024-04-01", "11", "USD");
  settled.symbol = "HLX";
  settled.rate = dec("1.10");
  f.post(settled);
  const Book book = f.book();
  CHECK(book.account(1).foreign_balance("USD") == dec("46.75"));  // 55 - 8.25
  CHECK(book.account(1).cash == dec("110.00"));                   // 100 + 11 / 1.10
}

TEST_CASE("guard rail: a foreign buy with neither foreign cash nor a settlement rate") {
  EuroFixture f;
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "10000");
  const std::string before = f.dump();
  CHECK(error_of([&] { f.post(f.trade(TxnKind::buy, "2024-01-10", "100", "50")); }) ==
        "the new buy on 2024-01-10 in 'Euro': needs 5000 USD of cash in USD, but 'Euro' holds 0 "
        "USD; cash in one currency does not pay for another: exchange it first, or give the "
        "broker's settlement rate");
  CHECK(f.dump() == before);
}

TEST_CASE("guard rail: a missing rate names the pair and the day") {
  EuroFixture f;
  f.rate("2024-02-01", "EUR", "USD", "1.10");
  const std::string before = f.dump();
  CHECK(error_of([&] { f.post(f.cash_row(TxnKind::deposit, "2024-01-02", "5", "USD")); }) ==
        "the new deposit on 2024-01-02 in 'Euro': no exchange rate for EUR/USD on or before "
        "2024-01-02 (nor for USD/EUR, nor through a third currency); import one with 'keel "
        "import fx FILE.csv'");
  CHECK(f.dump() == before);
}

TEST_CASE("guard rail: a settlement rate given the wrong way round shows both directions") {
  EuroFixture f;
  f.rate("2024-01-02", "EUR", "USD", "1.25");
  f.cash(TxnKind::deposit, "2024-01-02", "Euro", "10000");
  const std::string before = f.dump();
  auto buy = f.trade(TxnKind::buy, "2024-01-10", "100", "50");
  buy.rate = dec("0.8");
  CHECK(error_of([&] { f.post(buy); }) ==
        "buy: --rate 0.8 reads as 1 EUR = 0.8 USD, the wrong way round: on 2024-01-02 1 EUR = "
        "1.25 USD and 1 USD = 0.8 EUR; give the rate as USD per EUR");
  CHECK(f.dump() == before);
}

TEST_CASE("guard rail: a rate on a row in the account's own currency") {
  EuroFixture f;
  auto r = f.cash_row(TxnKind::deposit, "2024-01-02", "5", "EUR");
  r.kind = TxnKind::dividend;
  r.rate = dec("1.1");
  const std::string before = f.dump();
  CHECK(error_of([&] { f.post(r); }) ==
        "dividend: --rate 1.1 does not apply: the row is in EUR, the currency of account 'Euro'");
  CHECK(f.dump() == before);
}

TEST_CASE("currency: ISO 4217 codes and their minor units") {
  CHECK(minor_units("EUR") == 2);
  CHECK(minor_units("JPY") == 0);
  CHECK(minor_units("KWD") == 3);
  CHECK(minor_units("CLF") == 4);
  CHECK(round_money(dec("1234.5"), "JPY") == dec("1234"));  // half to even
  CHECK(parse_currency("usd", "--currency") == "USD");
  CHECK(error_of([] { parse_currency("XYZ", "--currency"); }) ==
        "--currency: 'XYZ' is not an ISO 4217 currency code (such as EUR, USD, JPY)");
  CHECK(error_of([] { normalize_currency("ABC"); }) ==
        "currency 'ABC' is not an ISO 4217 code (such as EUR, USD, JPY)");
}

TEST_CASE("migration 0005: a version-4 ledger keeps every row, link and record of its imports") {
  const auto dir =
      std::filesystem::temp_directory_path() / ("keel-fx-test-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const auto file = dir / "v4.db";
  {
    SQLite::Database raw(file.string(), SQLite::OPEN_READWRITE | SQLite::OPEN_CREATE);
    for (const auto& m : store::migrations())
      if (m.version <= 4) raw.exec(std::string(m.sql));
    raw.exec(
        "INSERT INTO account (id, name, currency, created_at) VALUES (1, 'A', 'EUR', 'x'), "
        "(2, 'B', 'EUR', 'x');"
        "INSERT INTO txn (id, account_id, date, kind, amount, recorded_at) VALUES "
        "(1, 1, '2024-01-02', 'deposit', '100', 'x');"
        "INSERT INTO txn (id, account_id, date, kind, amount, recorded_at) VALUES "
        "(2, 1, '2024-01-03', 'transfer_out', '40', 'x');"
        "INSERT INTO txn (id, account_id, date, kind, amount, link_id, recorded_at) VALUES "
        "(3, 2, '2024-01-03', 'transfer_in', '40', 2, 'x');"
        "INSERT INTO txn (id, account_id, date, kind, voids_id, recorded_at) VALUES "
        "(4, 1, '2024-01-04', 'void', 1, 'x');"
        "INSERT INTO import_run (id, what, file_name, file_sha256, rows_read, rows_added, "
        "imported_at) VALUES (1, 'transactions', 'f.csv', 'ab', 1, 1, 'x');"
        "INSERT INTO import_txn (run_id, txn_id, role) VALUES (1, 2, 'added');"
        "PRAGMA user_version = 4");
  }
  ::chmod(file.c_str(), 0600);
  {
    auto db = store::Database::open(file);
    const auto txns = store::list_transactions(db);
    REQUIRE(txns.size() == 4);
    CHECK(txns[2].link_id == std::optional<std::int64_t>(2));
    CHECK(txns[3].voids_id == std::optional<std::int64_t>(1));
    CHECK_FALSE(txns[0].currency.has_value());
    CHECK(db.sql().execAndGet("SELECT count(*) FROM import_txn WHERE txn_id = 2").getInt() == 1);
    CHECK(db.sql().execAndGet("PRAGMA foreign_keys").getInt() == 1);
    // Still append-only, and the foreign keys still hold against the rebuilt table.
    CHECK_THROWS_AS(db.sql().exec("UPDATE txn SET amount = '1' WHERE id = 1"), SQLite::Exception);
    CHECK_THROWS_AS(db.sql().exec("INSERT INTO import_txn (run_id, txn_id, role) VALUES (1, 99, "
                                  "'added')"),
                    SQLite::Exception);
  }
  std::filesystem::remove_all(dir);
}
