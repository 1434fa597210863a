// Reconciliation: every difference between ledger and statement, with the
// explanations keel can find, and a match recorded.
#include "reconcile/reconcile.h"

#include <doctest/doctest.h>

#include "io/errors.h"
#include "io/market_intake.h"
#include "ledger/period.h"
#include "ledger_fixture.h"
#include "report/statement.h"
#include "store/period_store.h"
#include "test_files.h"

using namespace keel;
using namespace keel::testing;

namespace {

struct Books {
  test::TempDir dir;
  LedgerFixture f;
  Books() {
    f.account("Main");
    f.security("QRX");
    f.cash(TxnKind::deposit, "2024-01-02", "Main", "1000");
    f.buy("2024-01-03", "Main", "QRX", "10", "50");
  }
  reconcile::BrokerStatement statement(const std::string& csv) {
    return reconcile::read_statement_csv(f.db, dir.write("s.csv", csv), day("2024-01-31"),
                                         std::nullopt);
  }
};

const char* kHeader = "account,symbol,quantity,cost_basis,currency,cash\n";

}  // namespace

TEST_CASE("reconcile: a statement that matches is recorded and locks the period") {
  Books b;
  const auto r = reconcile::reconcile(
      b.f.db, b.statement(std::string(kHeader) + "Main,QRX,10,500,,\nMain,,,,USD,500\n"));
  CHECK(r.differences.empty());
  CHECK(r.items == 3);
  REQUIRE(r.recorded);
  CHECK(ledger::PeriodLocks::load(b.f.db).locked_through(1) == day("2024-01-31"));
}

TEST_CASE("reconcile: a dividend dated after the statement day explains a cash difference") {
  Books b;
  b.f.cash(TxnKind::dividend, "2024-02-02", "Main", "7.5", "QRX");
  const std::string before = b.f.dump();
  const auto r = reconcile::reconcile(
      b.f.db, b.statement(std::string(kHeader) + "Main,QRX,10,,,\nMain,,,,USD,507.5\n"));
  REQUIRE(r.differences.size() == 1);
  const auto& d = r.differences[0];
  CHECK(d.item == "cash USD");
  CHECK(d.ledger == dec("500"));
  CHECK(d.statement == dec("507.5"));
  REQUIRE(d.explanations.size() == 1);
  CHECK(d.explanations[0] ==
        "transaction 3 (a dividend of 7.5 (QRX) on 2024-02-02) is dated after the statement day");
  CHECK(b.f.dump() == before);  // a statement that differs records nothing
}

TEST_CASE("reconcile: an unbooked distribution in the market data explains a cash difference") {
  Books b;
  io::import_market(b.f.db, io::MarketKind::distributions,
                    b.dir.write("d.csv",
                                "ex_date,pay_date,symbol,per_share\n"
                                "2024-01-15,2024-01-25,QRX,0.42\n"),
                    {});
  const auto r = reconcile::compare(
      b.f.db, b.statement(std::string(kHeader) + "Main,QRX,10,,,\nMain,,,,USD,504.2\n"));
  REQUIRE(r.differences.size() == 1);
  REQUIRE(r.differences[0].explanations.size() == 1);
  CHECK(r.differences[0].explanations[0] ==
        "a dividend of 0.42 x 10 QRX = 4.2 (distribution with ex-date 2024-01-15, paid "
        "2024-01-25) is not booked");
}

TEST_CASE("reconcile: an unrecorded split explains a units difference; cost basis is compared") {
  Books b;
  const auto r =
      reconcile::compare(b.f.db, b.statement(std::string(kHeader) + "Main,QRX,30,510,,\n"));
  REQUIRE(r.differences.size() == 2);
  CHECK(r.differences[0].item == "QRX units");
  REQUIRE(r.differences[0].explanations.size() == 1);
  CHECK(r.differences[0].explanations[0] ==
        "a split of QRX with ratio 3 (3 new units per old unit) is not recorded");
  CHECK(r.differences[1].item == "QRX cost basis");
  CHECK(r.differences[1].ledger == dec("500"));
  CHECK(r.differences[1].explanations.empty());
}

TEST_CASE("reconcile: a position the statement lacks and cash in another currency differ") {
  Books b;
  const auto r = reconcile::compare(
      b.f.db, b.statement(std::string(kHeader) + "Main,,,,USD,500\nMain,,,,EUR,3\n"));
  REQUIRE(r.differences.size() == 2);
  CHECK(r.differences[0].item == "QRX units");
  CHECK(r.differences[0].statement == dec("0"));
  CHECK(r.differences[1].item == "cash EUR");
}

TEST_CASE("reconcile: a statement naming an unknown account or security is refused") {
  Books b;
  try {
    b.statement(std::string(kHeader) + "Mian,QRX,10,,,\nMain,QXR,1,,,\n");
    FAIL("accepted");
  } catch (const io::ImportRefused& e) {
    REQUIRE(e.lines().size() == 2);
    CHECK(e.lines()[0] == (b.dir.path() / "s.csv").string() +
                              ":2: column 'account': unknown account 'Mian'; did you mean 'Main'?");
    CHECK(e.lines()[1] == (b.dir.path() / "s.csv").string() +
                              ":3: column 'symbol': unknown security 'QXR'; did you mean 'QRX'?");
  }
}

TEST_CASE("statement: an account's last reconciled day is noted beside the holdings") {
  Books b;
  reconcile::reconcile(b.f.db,
                       b.statement(std::string(kHeader) + "Main,QRX,10,,,\nMain,,,,USD,500\n"));
  report::StatementRequest request;
  request.year = 2024;
  const auto s = report::build_statement(b.f.db, request);
  REQUIRE(s.reconciled.size() == 1);
  CHECK(s.reconciled[0] == std::pair<std::string, Date>{"Main", day("2024-01-31")});
}
