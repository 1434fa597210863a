// Plausibility checks: posted rows that look like slips are flagged until
// confirmed; ordinary rows are not.
#include "ledger/plausibility.h"

#include <doctest/doctest.h>

#include "ledger_fixture.h"
#include "store/price_write.h"

using namespace keel;
using namespace keel::testing;

namespace {

std::vector<std::string> flags(LedgerFixture& f) {
  std::vector<std::string> out;
  for (const auto& flag : ledger::plausibility_flags(f.db, ledger::load_log(f.db)))
    out.push_back(flag.message);
  return out;
}

}  // namespace

TEST_CASE("plausibility: a price more than 25 % from the day's close is flagged") {
  LedgerFixture f;
  f.main_with_alfa("10000");
  store::upsert_price(f.db, 1, day("2024-03-01"), dec("60"));
  f.buy("2024-03-01", "Main", "ALFA", "1", "75");  // exactly 25 % above: not flagged
  CHECK(flags(f).empty());
  f.buy("2024-03-01", "Main", "ALFA", "1", "600");
  CHECK(flags(f) == std::vector<std::string>{
                        "transaction 3 (buy of ALFA on 2024-03-01 in 'Main'): price 600 is 900.0% "
                        "above the day's close of 60"});
}

TEST_CASE("plausibility: a dividend on a security not held is flagged") {
  LedgerFixture f;
  f.main_with_alfa("10000");
  f.cash(TxnKind::dividend, "2024-03-01", "Main", "12", "ALFA");
  CHECK(flags(f) == std::vector<std::string>{"transaction 2 (dividend of ALFA on 2024-03-01 in "
                                             "'Main'): no units of it were held when the day "
                                             "began"});
}

TEST_CASE("plausibility: a dividend on a security held is not flagged") {
  LedgerFixture f;
  f.main_with_alfa("10000");
  f.buy("2024-02-01", "Main", "ALFA", "10", "50");
  f.cash(TxnKind::dividend, "2024-03-01", "Main", "12", "ALFA");
  CHECK(flags(f).empty());
}

TEST_CASE("plausibility: a buy and a sale on one day in one account are flagged") {
  LedgerFixture f;
  f.main_with_alfa("10000");
  f.buy("2024-03-01", "Main", "ALFA", "10", "50");
  f.sell("2024-03-01", "Main", "ALFA", "10", "51");
  CHECK(flags(f) == std::vector<std::string>{
                        "transaction 3 (sell of ALFA on 2024-03-01 in 'Main'): a buy of the same "
                        "security on the same day in the same account (transaction 2)"});
}

TEST_CASE("plausibility: a confirmed transaction is flagged no more, and only once") {
  LedgerFixture f;
  f.main_with_alfa("10000");
  f.buy("2024-03-01", "Main", "ALFA", "10", "50");
  f.sell("2024-03-01", "Main", "ALFA", "10", "51");
  CHECK_THROWS_WITH_AS(ledger::confirm(f.db, 2, "fine"),
                       "transaction 2 is not flagged by any plausibility check", InputError);
  ledger::confirm(f.db, 3, "closed the same day on purpose");
  CHECK(flags(f).empty());
  const auto before = f.dump();
  CHECK_THROWS_WITH_AS(ledger::confirm(f.db, 3, "again"), "transaction 3 is confirmed already",
                       InputError);
  CHECK(f.dump() == before);
}
