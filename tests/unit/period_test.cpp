// Period locks: a matched statement closes an account's past until reopened.
#include "ledger/period.h"

#include <doctest/doctest.h>

#include "ledger_fixture.h"
#include "store/period_store.h"

using namespace keel;
using namespace keel::testing;

namespace {

void reconciled(LedgerFixture& f, const char* on) {
  store::Reconciliation r;
  r.day = day(on);
  r.file_name = "statement.csv";
  r.file_sha256 = std::string(64, 'a');
  r.account_ids = {store::account_named(f.db, "Main").id};
  store::WriteTransaction tx(f.db);
  store::insert_reconciliation(f.db, r);
  tx.commit();
}

ledger::PostRequest deposit(const char* on) {
  ledger::PostRequest r;
  r.kind = TxnKind::deposit;
  r.date = day(on);
  r.account = "Main";
  r.amount = dec("5");
  return r;
}

}  // namespace

TEST_CASE("period lock: a posting dated on the reconciled day is refused, nothing changes") {
  LedgerFixture f;
  f.account("Main");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "100");
  reconciled(f, "2024-01-31");
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(
      ledger::post(f.db, deposit("2024-01-31")),
      "a deposit dated 2024-01-31 would change 'Main', which is reconciled through 2024-01-31; "
      "if the statement was wrong, reopen the period first: keel reopen --account "
      "'Main' --from 2024-01-31 --reason TEXT",
      InputError);
  CHECK(f.dump() == before);
  CHECK_NOTHROW(ledger::post(f.db, deposit("2024-02-01")));
}

TEST_CASE("period lock: voiding a row of a reconciled period is refused") {
  LedgerFixture f;
  f.account("Main");
  const auto id = f.cash(TxnKind::deposit, "2024-01-02", "Main", "100");
  reconciled(f, "2024-01-31");
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(ledger::void_transaction(f.db, id, "typo"),
                       doctest::Contains("voiding transaction 1 (a deposit dated 2024-01-02) "
                                         "would change 'Main'"),
                       InputError);
  CHECK(f.dump() == before);
}

TEST_CASE("period lock: a split dated in a reconciled period of a holder is refused") {
  LedgerFixture f;
  f.account("Main");
  f.security("QRX");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "1000");
  f.buy("2024-01-03", "Main", "QRX", "10", "50");
  reconciled(f, "2024-01-31");
  CHECK_THROWS_WITH_AS(ledger::post_split(f.db, "QRX", day("2024-01-15"), dec("2")),
                       doctest::Contains("a split of QRX dated 2024-01-15 would change 'Main'"),
                       InputError);
  CHECK_NOTHROW(ledger::post_split(f.db, "QRX", day("2024-02-15"), dec("2")));
}

TEST_CASE("period lock: reopening lets postings from its first day in and is recorded") {
  LedgerFixture f;
  f.account("Main");
  f.cash(TxnKind::deposit, "2024-01-02", "Main", "100");
  reconciled(f, "2024-01-31");
  ledger::reopen(f.db, "Main", day("2024-01-20"), "statement showed a late fee");
  const auto main_id = store::account_named(f.db, "Main").id;
  CHECK(ledger::PeriodLocks::load(f.db).locked_through(main_id) == day("2024-01-19"));
  CHECK_NOTHROW(ledger::post(f.db, deposit("2024-01-20")));
  CHECK_THROWS_AS(ledger::post(f.db, deposit("2024-01-19")), InputError);
  const auto events = store::period_events(f.db, main_id);
  REQUIRE(events.size() == 2);
  CHECK(events[1].kind == store::PeriodEvent::Kind::reopened);
  CHECK(events[1].day == day("2024-01-20"));
  // A later match closes the period again.
  reconciled(f, "2024-01-31");
  CHECK(ledger::PeriodLocks::load(f.db).locked_through(main_id) == day("2024-01-31"));
}

TEST_CASE("period lock: reopening an account with nothing reconciled is refused") {
  LedgerFixture f;
  f.account("Main");
  CHECK_THROWS_WITH_AS(ledger::reopen(f.db, "Main", day("2024-01-20"), "why"),
                       "--account: 'Main' has no reconciled period to reopen", InputError);
}
