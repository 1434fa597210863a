// Every guard rail refuses with a clear message and leaves the ledger exactly
// as it was (compared through a dump of every table).
#include <SQLiteCpp/Exception.h>
#include <doctest/doctest.h>
#include <fmt/format.h>

#include <unordered_set>

#include "ledger_fixture.h"

using namespace keel;
using namespace keel::testing;

namespace {

struct Funded : LedgerFixture {
  Funded() {
    account("Main");
    security("ALFA");
    security("IDX", SecurityKind::index);
    cash(TxnKind::deposit, "2025-01-02", "Main", "1000");
    buy("2025-01-03", "Main", "ALFA", "5", "100");
  }
};

ledger::PostRequest request(TxnKind kind) {
  ledger::PostRequest r;
  r.kind = kind;
  r.date = day("2025-02-01");
  r.account = "Main";
  return r;
}

// Posts `r`, expects `message`, and proves nothing changed.
void expect_refused(Funded& f, const ledger::PostRequest& r, const std::string& message) {
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(ledger::post(f.db, r), message.c_str(), InputError);
  CHECK(f.dump() == before);
}

}  // namespace

TEST_CASE("guard rail: selling more than is held") {
  Funded f;
  auto r = request(TxnKind::sell);
  r.symbol = "ALFA", r.quantity = dec("6"), r.price = dec("110");
  expect_refused(f, r, "the new sell on 2025-02-01 in 'Main': cannot take 6 units; only 5 held");
}

TEST_CASE("guard rail: a zero amount") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.amount = dec("0");
  expect_refused(f, r, "deposit: --amount must be positive, not 0 (the kind gives the direction)");
}

TEST_CASE("guard rail: a negative quantity") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "ALFA", r.quantity = dec("-1"), r.price = dec("10");
  expect_refused(f, r, "buy: --quantity must be positive, not -1 (the kind gives the direction)");
}

TEST_CASE("guard rail: a negative fee") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "ALFA", r.quantity = dec("1"), r.price = dec("10"), r.fee = dec("-1");
  expect_refused(f, r, "buy: --fee must not be negative");
}

TEST_CASE("guard rail: a buy without a price") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "ALFA", r.quantity = dec("1");
  expect_refused(f, r, "buy: --price is required");
}

TEST_CASE("guard rail: an unknown account") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.account = "Mian", r.amount = dec("5");
  expect_refused(f, r, "unknown account 'Mian'; did you mean 'Main'?");
}

TEST_CASE("guard rail: an unknown security") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "ZETA", r.quantity = dec("1"), r.price = dec("10");
  expect_refused(f, r, "unknown security 'ZETA'; add it with 'keel security add ZETA'");
}

TEST_CASE("guard rail: a mistyped symbol is answered with the nearest one") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "ALFX", r.quantity = dec("1"), r.price = dec("10");
  expect_refused(f, r,
                 "unknown security 'ALFX'; did you mean 'ALFA'? To add a new one: 'keel security "
                 "add ALFX'");
}

TEST_CASE("guard rail: a symbol differing only in letter case is not offered as a new one") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "alfa", r.quantity = dec("1"), r.price = dec("10");
  expect_refused(f, r,
                 "unknown security 'alfa'; did you mean 'ALFA'? (it differs in letter case only)");
}

TEST_CASE("guard rail: an account name differing only in letter case is named") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.account = "MAIN", r.amount = dec("5");
  expect_refused(f, r,
                 "unknown account 'MAIN'; did you mean 'Main'? (it differs in letter case only)");
}

TEST_CASE("guard rail: cash below zero where the account does not allow it") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "ALFA", r.quantity = dec("6"), r.price = dec("100"), r.fee = dec("1");
  expect_refused(f, r,
                 "cash in 'Main' would be -101 at the end of 2025-02-01 (after the new buy on "
                 "2025-02-01 in 'Main'); the account does not allow negative cash");
}

TEST_CASE("guard rail: negative cash is fine where the account allows it") {
  LedgerFixture f;
  f.account("Margin", BasisMethod::fifo, /*allow_negative=*/true);
  f.security("ALFA");
  f.buy("2025-01-03", "Margin", "ALFA", "5", "100");
  CHECK(f.book().account(1).cash == dec("-500"));
}

TEST_CASE("guard rail: cash is checked at the end of the day, so a same-day sell funds a buy") {
  Funded f;  // cash 500, 5 ALFA
  store::WriteTransaction tx(f.db);
  auto buy = request(TxnKind::buy);
  buy.symbol = "ALFA", buy.quantity = dec("9"), buy.price = dec("100");  // cash -400 for now
  auto sell = request(TxnKind::sell);
  sell.symbol = "ALFA", sell.quantity = dec("5"), sell.price = dec("100");  // back to +100
  ledger::write_unchecked(f.db, buy);
  ledger::write_unchecked(f.db, sell);
  CHECK(ledger::check_ledger(f.db).account(1).cash == dec("100"));
}

TEST_CASE("guard rail: a back-dated sell that breaks a later day is refused") {
  Funded f;
  f.sell("2025-03-01", "Main", "ALFA", "5", "100");
  auto r = request(TxnKind::sell);
  r.date = day("2025-02-01"), r.symbol = "ALFA", r.quantity = dec("1"), r.price = dec("100");
  // Selling one earlier leaves only four for the sell of five on 2025-03-01.
  expect_refused(f, r,
                 "transaction 3 (sell on 2025-03-01 in 'Main'): cannot take 5 units; only 4 held");
}

TEST_CASE("guard rail: the same reference is never booked twice in an account") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.amount = dec("5"), r.ref = "stmt-0001";
  ledger::post(f.db, r);
  expect_refused(f, r, "reference 'stmt-0001' is already booked in account 'Main'");
}

TEST_CASE("guard rail: units of an index cannot be held") {
  Funded f;
  auto r = request(TxnKind::buy);
  r.symbol = "IDX", r.quantity = dec("1"), r.price = dec("10");
  expect_refused(f, r, "buy: IDX is an index; an index has levels, not units to hold");
}

TEST_CASE("guard rail: figures that do not apply to a kind are refused") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.amount = dec("5"), r.quantity = dec("1");
  expect_refused(f, r, "deposit: --quantity does not apply");
}

TEST_CASE("guard rail: a security brought in from outside needs its unit cost") {
  Funded f;
  auto r = request(TxnKind::transfer_in);
  r.symbol = "ALFA", r.quantity = dec("1");
  expect_refused(f, r, "transfer_in: --price (the unit cost of the units brought in) is required");
}

TEST_CASE("guard rail: a transfer to the same account is refused") {
  Funded f;
  auto r = request(TxnKind::transfer_out);
  r.amount = dec("5"), r.to_account = "Main";
  expect_refused(f, r, "transfer_out: --to-account names the same account");
}

TEST_CASE("regression: a deposit dated 2099-12-31 was posted without a word") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.amount = dec("5"), r.date = day("2099-12-31");
  expect_refused(f, r,
                 fmt::format("deposit: --date 2099-12-31 is after today ({}); give "
                             "--allow-future-date to post it anyway",
                             Date::today().str()));
}

TEST_CASE("future dates: tomorrow is refused, today is posted, and the override posts tomorrow") {
  Funded f;
  auto r = request(TxnKind::deposit);
  r.amount = dec("5"), r.date = Date::today().plus_days(1);
  const std::string before = f.dump();
  CHECK_THROWS_AS(ledger::post(f.db, r), InputError);
  CHECK(f.dump() == before);
  r.allow_future = true;
  CHECK_NOTHROW(ledger::post(f.db, r));
  r.allow_future = false, r.date = Date::today();
  CHECK_NOTHROW(ledger::post(f.db, r));
}

TEST_CASE("future dates: a split dated after today is refused unless allowed") {
  Funded f;
  const Date later = Date::today().plus_days(30);
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(ledger::post_split(f.db, "ALFA", later, dec("2")),
                       fmt::format("split: --date {} is after today ({}); give "
                                   "--allow-future-date to post it anyway",
                                   later.str(), Date::today().str())
                           .c_str(),
                       InputError);
  CHECK(f.dump() == before);
  CHECK_NOTHROW(ledger::post_split(f.db, "ALFA", later, dec("2"), true));
}

TEST_CASE("void: a voided transaction no longer counts, and the row stays") {
  Funded f;
  const auto id = f.cash(TxnKind::deposit, "2025-02-01", "Main", "50");
  ledger::void_transaction(f.db, id, "typed twice");
  CHECK(f.book().account(1).cash == dec("500"));
  CHECK(store::find_transaction(f.db, id).has_value());
  CHECK(store::void_of(f.db, id).has_value());
}

TEST_CASE("void: voiding a buy that later sells depend on is refused") {
  Funded f;
  f.sell("2025-03-01", "Main", "ALFA", "5", "100");
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(
      ledger::void_transaction(f.db, 2, "wrong"),
      "transaction 3 (sell on 2025-03-01 in 'Main'): cannot take 5 units; only 0 held", InputError);
  CHECK(f.dump() == before);
}

TEST_CASE("void: a transaction cannot be voided twice; the message says which void to void") {
  Funded f;
  const auto id = f.cash(TxnKind::deposit, "2025-02-01", "Main", "50");
  const auto voids = ledger::void_transaction(f.db, id, "typed twice").void_ids;
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(ledger::void_transaction(f.db, id, "again"),
                       fmt::format("transaction {} is already void (by {}); to put it back in "
                                   "the books, void {}",
                                   id, voids.front(), voids.front())
                           .c_str(),
                       InputError);
  CHECK(f.dump() == before);
}

TEST_CASE("regression: a void could not be undone; voiding the void puts the transaction back") {
  Funded f;
  const auto id = f.cash(TxnKind::deposit, "2025-02-01", "Main", "50");
  const auto first = ledger::void_transaction(f.db, id, "typed twice");
  REQUIRE(first.cancelled.size() == 1);
  CHECK(first.cancelled.front().id == id);
  CHECK(first.reinstated.empty());
  CHECK(f.book().account(1).cash == dec("500"));

  const auto undo = ledger::void_transaction(f.db, first.void_ids.front(), "it was right");
  CHECK(undo.cancelled.empty());
  REQUIRE(undo.reinstated.size() == 1);
  CHECK(undo.reinstated.front().id == id);
  CHECK(f.book().account(1).cash == dec("550"));
  // All three rows stay: the deposit, its void, the void of the void.
  const auto rows = store::list_transactions(f.db);
  CHECK(rows.size() == 5);
  CHECK(voided_ids(rows) == std::unordered_set<std::int64_t>{first.void_ids.front()});

  // Voided again by voiding the void that put it back.
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(
      ledger::void_transaction(f.db, id, "again"),
      fmt::format("transaction {} was voided by {} and put back by {}; to void "
                  "it again, void {}",
                  id, first.void_ids.front(), undo.void_ids.front(), undo.void_ids.front())
          .c_str(),
      InputError);
  CHECK(f.dump() == before);
  const auto again = ledger::void_transaction(f.db, undo.void_ids.front(), "no, twice after all");
  REQUIRE(again.cancelled.size() == 1);
  CHECK(again.cancelled.front().id == id);
  CHECK(f.book().account(1).cash == dec("500"));
}

TEST_CASE("void: putting a transaction back is refused when the ledger would break") {
  Funded f;  // cash 500 after the buy
  const auto id = f.cash(TxnKind::withdrawal, "2025-02-01", "Main", "400");
  const auto v = ledger::void_transaction(f.db, id, "not taken").void_ids.front();
  f.cash(TxnKind::withdrawal, "2025-02-02", "Main", "300");
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(ledger::void_transaction(f.db, v, "it was taken"),
                       "cash in 'Main' would be -200 at the end of 2025-02-02 (after transaction "
                       "5 (withdrawal on 2025-02-02 in 'Main')); the account does not allow "
                       "negative cash",
                       InputError);
  CHECK(f.dump() == before);
}

TEST_CASE("void: along a chain of voids the last one is in force") {
  auto row = [](std::int64_t id, std::optional<std::int64_t> voids) {
    Transaction t;
    t.id = id;
    t.kind = voids ? TxnKind::void_entry : TxnKind::deposit;
    t.voids_id = voids;
    return t;
  };
  // 1 <- 2 <- 3 <- 4: 4 in force cancels 3; 3 cancelled, so 2 is in force and cancels 1.
  CHECK(voided_ids({row(1, {}), row(2, 1), row(3, 2), row(4, 3)}) ==
        std::unordered_set<std::int64_t>{1, 3});
  CHECK(voided_ids({row(1, {}), row(2, 1), row(3, 2)}) == std::unordered_set<std::int64_t>{2});
  CHECK(voided_ids({row(1, {}), row(2, 1)}) == std::unordered_set<std::int64_t>{1});
}

TEST_CASE("void: an unknown id and an empty reason are refused") {
  Funded f;
  CHECK_THROWS_WITH_AS(ledger::void_transaction(f.db, 99, "x"), "there is no transaction 99",
                       InputError);
  CHECK_THROWS_WITH_AS(ledger::void_transaction(f.db, 1, ""), "reason must not be empty",
                       InputError);
}

TEST_CASE("void: voiding one half of a transfer voids both, and voiding a void puts both back") {
  Funded f;
  f.account("Other");
  auto r = request(TxnKind::transfer_out);
  r.amount = dec("100"), r.to_account = "Other";
  const auto ids = ledger::post(f.db, r);
  const auto voided = ledger::void_transaction(f.db, ids.back(), "wrong account");
  CHECK(voided.void_ids.size() == 2);
  CHECK(voided.cancelled.size() == 2);
  Book book = f.book();
  CHECK(book.account(1).cash == dec("500"));
  CHECK(book.account(2).cash == dec("0"));
  const auto back = ledger::void_transaction(f.db, voided.void_ids.front(), "right account");
  CHECK(back.void_ids.size() == 2);
  CHECK(back.reinstated.size() == 2);
  book = f.book();
  CHECK(book.account(1).cash == dec("400"));
  CHECK(book.account(2).cash == dec("100"));
}

TEST_CASE("append-only: the schema refuses edits and deletions of posted rows") {
  Funded f;
  CHECK_THROWS_AS(f.db.sql().exec("UPDATE txn SET amount = '5' WHERE id = 1"), SQLite::Exception);
  CHECK_THROWS_AS(f.db.sql().exec("DELETE FROM txn WHERE id = 1"), SQLite::Exception);
}

TEST_CASE("splits: a ratio of zero or one is refused") {
  Funded f;
  CHECK_THROWS_WITH_AS(ledger::post_split(f.db, "ALFA", day("2025-02-01"), dec("0")),
                       "split: --ratio must be positive, not 0", InputError);
  CHECK_THROWS_AS(ledger::post_split(f.db, "ALFA", day("2025-02-01"), dec("1")), InputError);
}

TEST_CASE("batch: a batch is posted whole, or not at all, with the failing row named") {
  Funded f;
  auto deposit = request(TxnKind::deposit);
  deposit.amount = dec("100");
  auto oversell = request(TxnKind::sell);
  oversell.symbol = "ALFA", oversell.quantity = dec("50"), oversell.price = dec("1");
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(
      ledger::post_batch(f.db, {deposit, oversell}, {"broker.csv:2", "broker.csv:3"}),
      "broker.csv:3: sell on 2025-02-01 in 'Main': cannot take 50 units; only 5 held", InputError);
  CHECK(f.dump() == before);
  auto unknown = request(TxnKind::deposit);
  unknown.account = "Nobody", unknown.amount = dec("1");
  CHECK_THROWS_WITH_AS(ledger::post_batch(f.db, {deposit, unknown}, {"b.csv:2", "b.csv:3"}),
                       "b.csv:3: unknown account 'Nobody'; known accounts: Main", InputError);
  CHECK(f.dump() == before);
  CHECK(ledger::post_batch(f.db, {deposit, deposit}, {"b.csv:2", "b.csv:3"}).size() == 2);
  CHECK(f.book().account(1).cash == dec("700"));
}

// Regression: a cash transfer took --fee, which the lot engine never charged
// while the returns counted it; such a fee is now refused.
TEST_CASE("guard rail: a fee on a cash transfer is refused") {
  Funded f;
  auto r = request(TxnKind::transfer_out);
  r.amount = dec("50"), r.fee = dec("1");
  expect_refused(f, r,
                 "transfer_out: --fee on a cash transfer (record a separate fee) does not apply");
}
