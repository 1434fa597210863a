// keel verify: what a full check of the ledger reports.
#include "ledger/verify.h"

#include <doctest/doctest.h>
#include <fmt/format.h>

#include "ledger_fixture.h"

using namespace keel;
using namespace keel::testing;

namespace {

RealizedPart part(std::int64_t sell, std::int64_t lot, const char* proceeds, const char* cost) {
  RealizedPart p;
  p.sell_txn_id = sell;
  p.lot_id = lot;
  p.quantity = dec("1");
  p.proceeds = dec(proceeds);
  p.cost = dec(cost);
  return p;
}

}  // namespace

TEST_CASE("verify: an open lot or a realized part whose cost is below zero is a problem") {
  const std::vector<ledger::LotLine> open = {
      {"Main", "ALFA", Lot{4, day("2024-01-03"), dec("0.001"), dec("-0.0049"), std::nullopt}}};
  const auto found = ledger::check_signs({part(9, 4, "1", "-0.01")}, open);
  CHECK(found.problems ==
        std::vector<std::string>{"open lot 4 of ALFA in 'Main' has a cost of -0.0049",
                                 "sell 9: the part taken from lot 4 has a cost of -0.01"});
  CHECK(found.warnings.empty());
}

TEST_CASE("verify: a part's proceeds below zero are a problem when its sale's are not") {
  const auto found = ledger::check_signs({part(7, 1, "9.99", "0"), part(7, 2, "-3.99", "0")}, {});
  CHECK(found.problems ==
        std::vector<std::string>{"sell 7: the part taken from lot 2 has proceeds of -3.99"});
}

TEST_CASE("verify: a sale whose fee is above its gross proceeds is a warning, not a problem") {
  LedgerFixture f;
  f.main_with_alfa("100");
  f.buy("2024-01-03", "Main", "ALFA", "2", "1");
  f.sell("2024-02-01", "Main", "ALFA", "2", "0.01", "5");  // 0.02 gross, 5 fee
  const auto report = ledger::verify(f.db);
  CHECK(report.problems.empty());
  CHECK(report.warnings ==
        std::vector<std::string>{"sell 3: its fee is above its gross proceeds, so its proceeds "
                                 "are -4.98"});
}

TEST_CASE("regression: verify passed a ledger whose rounding left a lot's cost at -0.0049") {
  LedgerFixture f;
  f.sub_cent_lot();
  const auto report = ledger::verify(f.db);
  CHECK(report.ok());
  CHECK(report.warnings.empty());
}

TEST_CASE("regression: verify reported 0 warnings for a deposit dated 2099-12-31") {
  LedgerFixture f;
  f.main_with_alfa("100");
  ledger::PostRequest r;
  r.kind = TxnKind::deposit;
  r.date = day("2099-12-31");
  r.account = "Main";
  r.amount = dec("5");
  r.allow_future = true;
  ledger::post(f.db, r);
  ledger::post_split(f.db, "ALFA", day("2099-06-01"), dec("2"), true);
  const auto report = ledger::verify(f.db);
  CHECK(report.ok());
  const std::string today = Date::today().str();
  CHECK(report.warnings ==
        std::vector<std::string>{
            fmt::format("transaction 2 (deposit) is dated 2099-12-31, after today ({})", today),
            fmt::format("the split of ALFA is dated 2099-06-01, after today ({})", today)});
}

TEST_CASE("regression: text that is not UTF-8 passed verify without a word") {
  LedgerFixture f;
  f.main_with_alfa("100");
  // Written from outside keel, as another program or an old version could.
  f.db.sql().exec(
      "INSERT INTO txn (account_id, date, kind, amount, fee, note, recorded_at) VALUES (1, "
      "'2024-01-05', 'deposit', '3', '0', CAST(X'636166E9' AS TEXT), 'x')");
  f.db.sql().exec(
      "INSERT INTO price (security_id, date, close) VALUES (1, '2024-01-05', "
      "CAST(X'31FF' AS TEXT))");
  const auto report = ledger::verify(f.db);
  CHECK(report.ok());
  CHECK(report.warnings ==
        std::vector<std::string>{
            "table price, row security_id 1, date 2024-01-05, column close: '1\\xff' is not "
            "valid UTF-8",
            "table txn, row id 2, column note: 'caf\\xe9' is not valid UTF-8"});
}

TEST_CASE("verify: a stored name with an invisible character is a warning naming it") {
  LedgerFixture f;
  f.account("Main");
  f.db.sql().exec(
      "INSERT INTO account (name, currency, created_at) VALUES ('Main' || char(8203), 'USD', 'x')");
  const auto report = ledger::verify(f.db);
  CHECK(report.ok());
  CHECK(report.warnings == std::vector<std::string>{"account 2: account name 'Main<U+200B>' "
                                                    "contains U+200B ZERO WIDTH SPACE, an "
                                                    "invisible character"});
}
