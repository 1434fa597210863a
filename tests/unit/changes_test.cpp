// Corrections of descriptive fields: renamed records keep their id and
// history, the old values are kept with their day, and old symbols resolve.
#include <doctest/doctest.h>

#include "ledger/accounts.h"
#include "ledger_fixture.h"
#include "store/record_change_store.h"

using namespace keel;
using namespace keel::testing;

TEST_CASE("changes: a symbol change keeps the security, its lots and its old symbol") {
  LedgerFixture f;
  f.main_with_alfa("1000");
  f.buy("2024-01-03", "Main", "ALFA", "10", "50");
  ledger::SecurityChange change;
  change.symbol = "ALFB";
  change.name = "Alfa Bright (invented)";
  const Security now = ledger::change_security(f.db, "ALFA", change, day("2024-06-03"));
  CHECK(now.id == 1);
  CHECK(now.symbol == "ALFB");
  CHECK(f.book().account(1).positions.at(1).quantity() == dec("10"));
  const auto changes = store::list_record_changes(f.db);
  REQUIRE(changes.size() == 2);
  CHECK(changes[0].field == "symbol");
  CHECK(changes[0].old_value == "ALFA");
  CHECK(changes[0].new_value == "ALFB");
  CHECK(changes[0].effective == day("2024-06-03"));
  CHECK(changes[1].field == "name");
  CHECK(changes[1].old_value == "ALFA (invented)");
  // The old symbol still names it: a sale typed with it sells the same lots.
  f.sell("2024-07-01", "Main", "ALFA", "10", "55");
  CHECK(f.book().account(1).positions.empty());
}

TEST_CASE("changes: a symbol another security has is refused and changes nothing") {
  LedgerFixture f;
  f.main_with_alfa("1000");
  f.security("BETA");
  const auto before = f.dump();
  ledger::SecurityChange change;
  change.symbol = "BETA";
  CHECK_THROWS_WITH_AS(ledger::change_security(f.db, "ALFA", change, day("2024-06-03")),
                       "a security with the symbol 'BETA' exists already", InputError);
  CHECK(f.dump() == before);
}

TEST_CASE("changes: a change to the same values is refused") {
  LedgerFixture f;
  f.main_with_alfa("1000");
  ledger::SecurityChange change;
  change.symbol = "ALFA";
  CHECK_THROWS_WITH_AS(ledger::change_security(f.db, "ALFA", change, day("2024-06-03")),
                       "security 'ALFA': nothing to change", InputError);
}

TEST_CASE("changes: a renamed account keeps its id and its old name") {
  LedgerFixture f;
  f.main_with_alfa("1000");
  ledger::rename_account(f.db, "Main", "Brokerage", day("2024-05-01"));
  CHECK(store::account_named(f.db, "Brokerage").id == 1);
  const auto changes = store::list_record_changes(f.db);
  REQUIRE(changes.size() == 1);
  CHECK(changes[0].record == "account");
  CHECK(changes[0].old_value == "Main");
  CHECK_THROWS_WITH_AS(store::account_named(f.db, "Main"),
                       "unknown account 'Main'; known accounts: Brokerage", InputError);
}
