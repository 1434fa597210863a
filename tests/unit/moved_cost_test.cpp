// The lot engine's record of cost basis moved by transfers of units.
#include <doctest/doctest.h>

#include "ledger_fixture.h"

using namespace keel;
using namespace keel::testing;

namespace {

void move_units(LedgerFixture& k, TxnKind kind, const char* date, const char* account,
                const char* quantity, const char* price = nullptr, const char* to = nullptr) {
  ledger::PostRequest r;
  r.kind = kind;
  r.date = day(date);
  r.account = account;
  r.symbol = "CEDR";
  r.quantity = dec(quantity);
  if (price) r.price = dec(price);
  if (to) r.to_account = to;
  ledger::post(k.db, r);
}

}  // namespace

TEST_CASE("moved cost: an internal transfer moves the taken lots' cost out and in") {
  LedgerFixture k;
  k.account("Main");
  k.account("Spare");
  k.security("CEDR");
  k.cash(TxnKind::deposit, "2025-01-02", "Main", "1000");
  k.buy("2025-01-03", "Main", "CEDR", "3", "10", "1");  // lot cost 31
  move_units(k, TxnKind::transfer_out, "2025-02-01", "Main", "2", nullptr, "Spare");
  const auto moved = k.book().moved();
  REQUIRE(moved.size() == 2);
  CHECK_FALSE(moved[0].incoming);
  CHECK(moved[0].cost == dec("20.67"));  // 31 x 2/3 = 20.666..., half-to-even to the cent
  CHECK(moved[1].incoming);
  CHECK(moved[1].cost == dec("20.67"));
  CHECK(moved[0].account_id != moved[1].account_id);
}

TEST_CASE("moved cost: units from outside arrive at quantity times their price") {
  LedgerFixture k;
  k.account("Main");
  k.security("CEDR");
  move_units(k, TxnKind::transfer_in, "2025-03-01", "Main", "4", "12.5");
  move_units(k, TxnKind::transfer_out, "2025-04-01", "Main", "1");
  const auto moved = k.book().moved();
  REQUIRE(moved.size() == 2);
  CHECK(moved[0].incoming);
  CHECK(moved[0].cost == dec("50"));
  CHECK_FALSE(moved[1].incoming);
  CHECK(moved[1].cost == dec("12.5"));
}
