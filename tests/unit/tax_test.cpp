// Tax facts of a household: account tax status with a dated history, gains
// and statements that keep taxable events apart, the repurchase window, and
// withholding by security and issuer country. Every figure is worked out by
// hand in the comments.
#include "ledger/tax.h"

#include <doctest/doctest.h>

#include "ledger/accounts.h"
#include "ledger_fixture.h"
#include "report/statement.h"
#include "report/statement_forms.h"
#include "store/price_write.h"

using namespace keel;
using namespace keel::testing;

namespace {

// An invented household: a taxable account and a tax-deferred retirement
// account, both in USD, holding the invented ORWL (issuer in NL) and KRMB
// (issuer unknown).
struct Household : LedgerFixture {
  Household() {
    Account t;
    t.name = "Taxable";
    t.currency = "USD";
    ledger::add_account(db, t);
    Account r;
    r.name = "Retirement";
    r.currency = "USD";
    ledger::add_account(db, r, TaxStatus::tax_deferred);
    Security orwl;
    orwl.symbol = "ORWL";
    orwl.name = "Orwell Dredging (invented)";
    orwl.currency = "USD";
    orwl.country = "NL";
    store::insert_security(db, orwl);
    security("KRMB");
    cash(TxnKind::deposit, "2025-01-02", "Taxable", "10000");
    cash(TxnKind::deposit, "2025-01-02", "Retirement", "10000");
  }
  void close(const char* symbol, const char* d, const char* price) {
    store::upsert_price(db, store::security_with_symbol(db, symbol).id, day(d), dec(price));
  }
};

// A copy, so that a call on a temporary list leaves nothing dangling.
ledger::GainLine only(const std::vector<ledger::GainLine>& gains) {
  REQUIRE(gains.size() == 1);
  return gains.front();
}

}  // namespace

TEST_CASE("tax status: an account added without one is taxable from its opening") {
  Household h;
  const auto statuses = ledger::TaxStatuses::load(h.db);
  const auto taxable = store::account_named(h.db, "Taxable").id;
  const auto retirement = store::account_named(h.db, "Retirement").id;
  CHECK(statuses.on(taxable, day("0001-01-01")) == TaxStatus::taxable);
  CHECK(statuses.on(retirement, day("0001-01-01")) == TaxStatus::tax_deferred);
  CHECK(statuses.on(retirement, day("9999-12-31")) == TaxStatus::tax_deferred);
}

TEST_CASE("tax status: an account of an older ledger, with no status recorded, is taxable") {
  LedgerFixture f;
  f.account("Old");
  CHECK(ledger::TaxStatuses::load(f.db).on(store::account_named(f.db, "Old").id,
                                           day("2025-06-01")) == TaxStatus::taxable);
}

TEST_CASE("tax status: a dated change holds from its day on, and the earlier status before") {
  Household h;
  ledger::set_tax_status(h.db, "Taxable", TaxStatus::tax_exempt, day("2025-07-01"));
  const auto statuses = ledger::TaxStatuses::load(h.db);
  const auto id = store::account_named(h.db, "Taxable").id;
  CHECK(statuses.on(id, day("2025-06-30")) == TaxStatus::taxable);
  CHECK(statuses.on(id, day("2025-07-01")) == TaxStatus::tax_exempt);
  CHECK(statuses.changes().size() == 3);
  CHECK_FALSE(statuses.taxable_throughout(id, day("2025-01-01"), day("2025-12-31")));
  CHECK(statuses.taxable_throughout(id, day("2025-01-01"), day("2025-06-30")));
}

TEST_CASE("tax status: an unknown tax status is refused, naming the choices") {
  CHECK_THROWS_WITH_AS(parse_tax_status("sheltered"),
                       "unknown tax status 'sheltered'; expected one of: taxable, tax-deferred, "
                       "tax-exempt",
                       InputError);
  CHECK(to_string(parse_tax_status("tax-exempt")) == "tax-exempt");
}

TEST_CASE("tax status: a change to the status already in force is refused and changes nothing") {
  Household h;
  const auto before = h.dump();
  CHECK_THROWS_WITH_AS(
      ledger::set_tax_status(h.db, "Retirement", TaxStatus::tax_deferred, day("2025-03-01")),
      "account 'Retirement' is already tax-deferred on 2025-03-01; nothing to change", InputError);
  CHECK(h.dump() == before);
}

TEST_CASE("tax status: a second change on the same day is refused and changes nothing") {
  Household h;
  ledger::set_tax_status(h.db, "Taxable", TaxStatus::tax_exempt, day("2025-03-01"));
  const auto before = h.dump();
  CHECK_THROWS_WITH_AS(
      ledger::set_tax_status(h.db, "Taxable", TaxStatus::tax_deferred, day("2025-03-01")),
      "the account already has a tax status from 2025-03-01; give another --from day", InputError);
  CHECK(h.dump() == before);
}

TEST_CASE("security country: two letters A-Z, in capitals") {
  CHECK(normalize_country("nl") == "NL");
  CHECK_THROWS_WITH_AS(normalize_country("NLD"),
                       "country 'NLD' is not a two-letter ISO 3166-1 code such as NL", InputError);
  Household h;
  CHECK(store::security_with_symbol(h.db, "ORWL").country == std::optional<std::string>("NL"));
  CHECK_FALSE(store::security_with_symbol(h.db, "KRMB").country);
}

TEST_CASE("gains: a sale in the retirement account is not a taxable event") {
  Household h;
  h.buy("2025-02-03", "Retirement", "ORWL", "10", "100");
  h.sell("2025-03-03", "Retirement", "ORWL", "10", "120");  // gain 200
  const auto& g = only(ledger::realized_gains(h.db, 2025));
  CHECK(g.tax_status == TaxStatus::tax_deferred);
  CHECK_FALSE(g.taxable());
  CHECK(g.part.gain() == dec("200"));
}

TEST_CASE("gains: a sale made before an account became tax-exempt stays taxable") {
  Household h;
  h.buy("2025-02-03", "Taxable", "ORWL", "10", "100");
  h.sell("2025-03-03", "Taxable", "ORWL", "5", "120");  // gain 100, taxable that day
  h.sell("2025-08-01", "Taxable", "ORWL", "5", "130");  // gain 150, tax-exempt that day
  ledger::set_tax_status(h.db, "Taxable", TaxStatus::tax_exempt, day("2025-07-01"));
  const auto gains = ledger::realized_gains(h.db, 2025);
  REQUIRE(gains.size() == 2);
  CHECK(gains[0].taxable());
  CHECK_FALSE(gains[1].taxable());
}

TEST_CASE("statement: the gains of the retirement account are left out of the taxable list") {
  Household h;
  h.buy("2025-02-03", "Taxable", "ORWL", "10", "100");
  h.sell("2025-03-03", "Taxable", "ORWL", "10", "110");  // taxable gain 100
  h.buy("2025-02-03", "Retirement", "KRMB", "20", "50");
  h.sell("2025-04-01", "Retirement", "KRMB", "20", "65");               // sheltered gain 300
  h.cash(TxnKind::dividend, "2025-05-02", "Retirement", "40", "KRMB");  // sheltered income
  h.cash(TxnKind::tax, "2025-05-02", "Retirement", "6", "KRMB");        // withheld on it
  h.close("ORWL", "2025-12-31", "110");
  h.close("KRMB", "2025-12-31", "65");
  report::StatementRequest request;
  request.year = 2025;
  const auto s = report::build_statement(h.db, request);
  REQUIRE(s.gains.size() == 1);
  CHECK(s.gains[0].account == "Taxable");
  CHECK(s.realized_totals.all().gain == dec("100"));
  CHECK(s.income.empty());
  REQUIRE(s.not_taxable.size() == 2);
  CHECK(s.not_taxable[0].kind == "sale");
  CHECK(s.not_taxable[0].amount == dec("300"));
  CHECK(s.not_taxable[0].status == "tax-deferred");
  CHECK(s.not_taxable[1].kind == "dividend");
  CHECK(s.not_taxable[1].amount == dec("40"));
  CHECK(s.not_taxable[1].withheld == dec("6"));
  // The year's value still counts every gain: 100 + 300.
  CHECK(s.summary.realized_gain == dec("400"));
  CHECK(s.summary.difference().is_zero());
  std::vector<std::string> keys;
  for (const auto& sec : report::statement_sections(s)) keys.push_back(sec.key);
  CHECK(keys == std::vector<std::string>{"summary", "performance", "monthly", "holdings",
                                         "realized", "income", "withholding", "not_taxable",
                                         "cautions"});
}

TEST_CASE("withholding: summed per security and per issuer country, taxable accounts only") {
  Household h;
  h.buy("2025-02-03", "Taxable", "ORWL", "10", "100");
  h.buy("2025-02-03", "Taxable", "KRMB", "10", "50");
  h.buy("2025-02-03", "Retirement", "ORWL", "10", "100");
  h.cash(TxnKind::dividend, "2025-04-01", "Taxable", "50", "ORWL");
  h.cash(TxnKind::tax, "2025-04-01", "Taxable", "7.50", "ORWL");  // 15 % of 50
  h.cash(TxnKind::dividend, "2025-10-01", "Taxable", "30", "ORWL");
  h.cash(TxnKind::tax, "2025-10-01", "Taxable", "4.50", "ORWL");
  h.cash(TxnKind::dividend, "2025-06-01", "Taxable", "20", "KRMB");
  h.cash(TxnKind::tax, "2025-06-01", "Taxable", "5", "KRMB");
  h.cash(TxnKind::dividend, "2025-04-01", "Retirement", "50", "ORWL");
  h.cash(TxnKind::tax, "2025-04-01", "Retirement", "7.50", "ORWL");
  h.cash(TxnKind::tax, "2026-01-05", "Taxable", "1", "ORWL");  // another year
  const auto w = ledger::withholding(h.db, 2025);
  REQUIRE(w.by_security.size() == 2);
  CHECK(w.by_security[0].symbol == "KRMB");
  CHECK_FALSE(w.by_security[0].country);
  CHECK(w.by_security[0].withheld == dec("5"));
  CHECK(w.by_security[1].symbol == "ORWL");
  CHECK(w.by_security[1].income == dec("80"));
  CHECK(w.by_security[1].withheld == dec("12"));  // 7.50 + 4.50
  CHECK(w.by_country == std::map<std::string, Decimal>{{"", dec("5")}, {"NL", dec("12")}});
  CHECK(w.total == dec("17"));
  CHECK(w.not_taxable == dec("7.5"));
}

// The repurchase window. The US rule ("wash sale": a loss on a sale is not
// allowed when substantially identical securities are bought within 30 days
// before or after it) is described in IRS Publication 550, "Wash Sales"; the
// 30-day figure here is from memory of that publication. keel only flags.
TEST_CASE("repurchase window: a buy in another account 30 days after a loss is flagged") {
  Household h;
  h.buy("2025-02-03", "Taxable", "ORWL", "10", "100");
  h.sell("2025-03-03", "Taxable", "ORWL", "10", "80");                       // loss 200
  const auto rebuy = h.buy("2025-04-02", "Retirement", "ORWL", "10", "81");  // 30 days later
  auto gains = ledger::realized_gains(h.db, 2025);
  ledger::flag_repurchases(h.db, gains, 30);
  const auto& g = only(gains);
  REQUIRE(g.repurchase);
  CHECK(g.repurchase->txn_id == rebuy);
  CHECK(g.repurchase->account == "Retirement");
  CHECK(g.repurchase->day == day("2025-04-02"));
}

TEST_CASE("repurchase window: a buy 31 days after a loss is outside a 30-day window") {
  Household h;
  h.buy("2025-02-03", "Taxable", "ORWL", "10", "100");
  h.sell("2025-03-03", "Taxable", "ORWL", "10", "80");
  h.buy("2025-04-03", "Taxable", "ORWL", "10", "81");  // 31 days later
  auto gains = ledger::realized_gains(h.db, 2025);
  ledger::flag_repurchases(h.db, gains, 30);
  CHECK_FALSE(only(gains).repurchase);
}

TEST_CASE("repurchase window: a buy 30 days before a loss is flagged, 31 days before is not") {
  for (const auto& [bought, flagged] :
       std::vector<std::pair<const char*, bool>>{{"2025-02-01", true}, {"2025-01-31", false}}) {
    Household h;
    h.buy("2025-01-06", "Taxable", "ORWL", "10", "100");  // the lot that is sold (FIFO)
    h.buy(bought, "Retirement", "ORWL", "5", "95");
    h.sell("2025-03-03", "Taxable", "ORWL", "10", "80");  // loss 200; 2025-03-03 - 30 = 02-01
    auto gains = ledger::realized_gains(h.db, 2025);
    ledger::flag_repurchases(h.db, gains, 30);
    CHECK(only(gains).repurchase.has_value() == flagged);
  }
}

TEST_CASE("repurchase window: the buy of the lot sold, and sales at a gain, are never flagged") {
  Household h;
  h.buy("2025-02-20", "Taxable", "ORWL", "10", "100");
  h.sell("2025-03-03", "Taxable", "ORWL", "10", "80");  // loss; its own buy 11 days before
  h.buy("2025-02-20", "Taxable", "KRMB", "10", "50");
  h.sell("2025-03-03", "Taxable", "KRMB", "5", "60");  // gain
  h.buy("2025-03-04", "Taxable", "KRMB", "5", "60");   // a day later, but the sale gained
  auto gains = ledger::realized_gains(h.db, 2025);
  ledger::flag_repurchases(h.db, gains, 30);
  REQUIRE(gains.size() == 2);
  CHECK_FALSE(gains[0].repurchase);
  CHECK_FALSE(gains[1].repurchase);
}

TEST_CASE("repurchase window: off by default, and a window below one day is refused") {
  Household h;
  h.buy("2025-02-03", "Taxable", "ORWL", "10", "100");
  h.sell("2025-03-03", "Taxable", "ORWL", "10", "80");
  h.buy("2025-03-04", "Taxable", "ORWL", "10", "81");
  auto gains = ledger::realized_gains(h.db, 2025);
  CHECK_FALSE(only(gains).repurchase);
  CHECK_THROWS_WITH_AS(ledger::flag_repurchases(h.db, gains, 0),
                       "--repurchase-window: '0' days; give 1 or more (the window is off unless "
                       "given)",
                       InputError);
}
