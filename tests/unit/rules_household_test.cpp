// A household's tax keys in the orders (HouseholdPrefs, rules/engine.h): where
// a placed name is bought, which account sells first, the gain cap, and a
// withdrawal raised by selling. Quantities are worked out by hand in the
// comments (whole units, no fees, no reserve).
#include <doctest/doctest.h>

#include "core/error.h"
#include "rules/engine.h"
#include "rules/plan.h"
#include "rules/rule.h"

using namespace keel;
using namespace keel::rules;

namespace {

const Date kAsOf = Date::parse("2026-06-30");

Decimal dec(const char* s) {
  return Decimal::parse(s);
}

Target target(std::int64_t id, const std::string& symbol, const char* weight) {
  Target t;
  t.security_id = id;
  t.symbol = symbol;
  t.weight = dec(weight);
  t.why = "fixed";
  return t;
}

AccountState account(std::int64_t id, const std::string& name, TaxStatus tax, const char* cash) {
  AccountState a;
  a.id = id;
  a.name = name;
  a.tax = tax;
  a.cash = dec(cash);
  return a;
}

void hold(AccountState& a, std::int64_t security, std::int64_t lot_id, const char* acquired,
          const char* quantity, const char* cost) {
  auto& h = a.holdings[security];
  h.quantity += dec(quantity);
  h.lots.push_back(LotState{lot_id, Date::parse(acquired), dec(quantity), dec(cost)});
}

// Taxable "Brokerage" (index 0) and tax-deferred "Retirement" (index 1).
// Security 1 "STK" at 100; security 2 "BND" at 100.
Quotes two_quotes() {
  Quotes q;
  q[1] = Quote{"STK", dec("100"), true, Decimal(1)};
  q[2] = Quote{"BND", dec("100"), true, Decimal(1)};
  return q;
}

std::vector<const Order*> of(const OrderPlan& plan, const std::string& symbol) {
  std::vector<const Order*> out;
  for (const auto& o : plan.orders)
    if (o.symbol == symbol) out.push_back(&o);
  return out;
}

}  // namespace

TEST_CASE("placement: a sleeve goes to the tax-deferred account first") {
  // 2000 in each account; BND 50 % = 2000: all of it in Retirement when placed,
  // STK 50 % then takes Brokerage's cash.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "2000"),
               account(2, "Retirement", TaxStatus::tax_deferred, "2000")}};
  HouseholdPrefs prefs;
  prefs.place_deferred = {2};
  const auto plan = orders(p, {target(1, "STK", "0.5"), target(2, "BND", "0.5")}, two_quotes(),
                           TradingRule{}, kAsOf, Explain::all, prefs);
  const auto bnd = of(plan, "BND");
  REQUIRE(bnd.size() == 1);
  CHECK(bnd[0]->account == "Retirement");
  CHECK(bnd[0]->quantity == dec("20"));
  CHECK(bnd[0]->reason == "fixed: new position; placed in Retirement: tax-deferred first");
  const auto stk = of(plan, "STK");
  REQUIRE(stk.size() == 1);
  CHECK(stk[0]->account == "Brokerage");
  CHECK(stk[0]->reason == "fixed: new position");
}

TEST_CASE("placement: without the key the larger cash buys first, wherever it is") {
  // The same household without place: STK comes first in the targets and takes
  // the first account by cash (equal: the pool's order, Brokerage).
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "2000"),
               account(2, "Retirement", TaxStatus::tax_deferred, "2000")}};
  const auto plan = orders(p, {target(1, "STK", "0.5"), target(2, "BND", "0.5")}, two_quotes(),
                           TradingRule{}, kAsOf);
  REQUIRE(of(plan, "BND").size() == 1);
  CHECK(of(plan, "BND")[0]->account == "Retirement");
  CHECK(of(plan, "STK")[0]->account == "Brokerage");
  CHECK(of(plan, "BND")[0]->reason == "fixed: new position");
}

TEST_CASE("sell order: tax-deferred holdings are sold before taxable ones") {
  // 10 STK in each account (2000), target 25 % = 500: sell 15 units,
  // Retirement's 10 first (no tax event), then 5 in Brokerage.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0"),
               account(2, "Retirement", TaxStatus::tax_deferred, "0")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "10", "500");
  hold(p.accounts[1], 1, 2, "2024-01-10", "10", "500");
  HouseholdPrefs prefs;
  prefs.sell_deferred_first = true;
  const auto plan = orders(p, {target(1, "STK", "0.25")}, two_quotes(), TradingRule{}, kAsOf,
                           Explain::all, prefs);
  const auto stk = of(plan, "STK");
  REQUIRE(stk.size() == 2);
  CHECK(stk[0]->account == "Brokerage");
  CHECK(stk[0]->quantity == dec("5"));
  CHECK(stk[0]->reason == "fixed: trim to target");
  CHECK(stk[1]->account == "Retirement");
  CHECK(stk[1]->quantity == dec("10"));
  CHECK(stk[1]->reason == "fixed: trim to target; sold in Retirement: no tax event");
}

TEST_CASE("sell order: without the key the highest-cost lot sells first, wherever it is") {
  // Same holdings, Brokerage's lot dearer (800 for 10): its 10 go first, then 5 of Retirement's.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0"),
               account(2, "Retirement", TaxStatus::tax_deferred, "0")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "10", "800");
  hold(p.accounts[1], 1, 2, "2024-01-10", "10", "500");
  const auto plan = orders(p, {target(1, "STK", "0.25")}, two_quotes(), TradingRule{}, kAsOf);
  const auto stk = of(plan, "STK");
  REQUIRE(stk.size() == 2);
  CHECK(stk[0]->quantity == dec("10"));
  CHECK(stk[1]->quantity == dec("5"));
}

TEST_CASE("gain cap: a sell that would pass the cap is cut and says so") {
  // Brokerage holds 20 STK bought at 40 (gain 60 a unit); target 0 sells all
  // 20 (gain 1200). A cap of 500 allows 8 units (480); 12 are kept.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "20", "800");
  p.accounts[0].cash = dec("100");
  HouseholdPrefs prefs;
  prefs.gain_cap = dec("500");
  const auto plan =
      orders(p, {target(1, "STK", "0")}, two_quotes(), TradingRule{}, kAsOf, Explain::all, prefs);
  const auto stk = of(plan, "STK");
  REQUIRE(stk.size() == 1);
  CHECK(stk[0]->quantity == dec("8"));
  REQUIRE(stk[0]->lots.size() == 1);
  CHECK(stk[0]->lots[0].est_gain == dec("480"));
  CHECK(stk[0]->reason ==
        "fixed: sell all; 12 kept in Brokerage: the gain cap of 500.00 is reached");
}

TEST_CASE("gain cap: a loss taken first makes room for more gain") {
  // Lot 2 (10 at 120, loss 20 a unit) is the dearest and goes first: -200,
  // so a cap of 500 leaves 700 for lot 1: 11 units (660); 9 kept.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "20", "800");
  hold(p.accounts[0], 1, 2, "2026-03-02", "10", "1200");
  HouseholdPrefs prefs;
  prefs.gain_cap = dec("500");
  const auto plan =
      orders(p, {target(1, "STK", "0")}, two_quotes(), TradingRule{}, kAsOf, Explain::all, prefs);
  const auto stk = of(plan, "STK");
  REQUIRE(stk.size() == 1);
  CHECK(stk[0]->quantity == dec("21"));
  CHECK(stk[0]->reason ==
        "fixed: sell all; 9 kept in Brokerage: the gain cap of 500.00 is reached");
}

TEST_CASE("gain cap: a capped account that sells nothing lists the units kept") {
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "20", "800");
  HouseholdPrefs prefs;
  prefs.gain_cap = Decimal();
  const auto plan =
      orders(p, {target(1, "STK", "0")}, two_quotes(), TradingRule{}, kAsOf, Explain::all, prefs);
  CHECK(plan.orders.empty());
  REQUIRE(plan.skipped.size() == 1);
  CHECK(plan.skipped[0].symbol == "STK");
  CHECK(plan.skipped[0].why == "20 units kept in Brokerage: the gain cap of 0.00 is reached");
}

TEST_CASE("gain cap: sells in a tax-deferred account do not count against it") {
  Portfolio p{{account(2, "Retirement", TaxStatus::tax_deferred, "0")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "20", "800");
  HouseholdPrefs prefs;
  prefs.gain_cap = Decimal();
  const auto plan =
      orders(p, {target(1, "STK", "0")}, two_quotes(), TradingRule{}, kAsOf, Explain::all, prefs);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].quantity == dec("20"));
  CHECK(plan.orders[0].reason == "fixed: sell all; sold in Retirement: no tax event");
}

TEST_CASE("withdrawal: an account that must give cash sells its overweight name first") {
  // Retirement must give 1000 beyond its cash: pool 1000 + 1500 - 1000 =
  // 1500, 15 units of the 25 held; the 10 sold come from Retirement first.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0"),
               account(2, "Retirement", TaxStatus::tax_deferred, "-1000")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "10", "800");
  hold(p.accounts[1], 1, 2, "2024-01-10", "15", "600");
  HouseholdPrefs prefs;
  prefs.must_give[2] = dec("1000");
  const auto plan =
      orders(p, {target(1, "STK", "1")}, two_quotes(), TradingRule{}, kAsOf, Explain::all, prefs);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].account == "Retirement");
  CHECK(plan.orders[0].quantity == dec("10"));
  CHECK(plan.cash_after[1].cash == Decimal());
}

TEST_CASE(
    "withdrawal: an account holding only names under target sells them; they are bought "
    "again elsewhere, saying why") {
  // Pool 2000 + 1000 - 500 = 2500; targets 1250 each. STK (Brokerage only) is
  // 750 over: 7 sold there. Retirement, 500 short, holds only BND (under
  // target): 5 of its lot at a loss are sold to raise the 500. BND then
  // stands at 500 of its 1250: the buy of 750 gets 7 units from Brokerage's
  // 700, and its reason says it buys what Retirement had to sell.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "0"),
               account(2, "Retirement", TaxStatus::tax_deferred, "-500")}};
  hold(p.accounts[0], 1, 1, "2024-01-10", "20", "800");
  hold(p.accounts[1], 2, 2, "2026-03-02", "10", "1200");
  HouseholdPrefs prefs;
  prefs.must_give[2] = dec("500");
  const auto plan = orders(p, {target(1, "STK", "0.5"), target(2, "BND", "0.5")}, two_quotes(),
                           TradingRule{}, kAsOf, Explain::all, prefs);
  REQUIRE(plan.orders.size() == 3);
  CHECK(plan.orders[0].account == "Brokerage");
  CHECK(plan.orders[0].symbol == "STK");
  CHECK(plan.orders[0].quantity == dec("7"));
  const Order& raised = plan.orders[1];
  CHECK(raised.account == "Retirement");
  CHECK(raised.symbol == "BND");
  CHECK(raised.side == Side::sell);
  CHECK(raised.quantity == dec("5"));
  CHECK(raised.reason == "fixed: sold to raise the cash Retirement must give (500.00 short)");
  CHECK(plan.orders[2].side == Side::buy);
  CHECK(plan.orders[2].account == "Brokerage");
  CHECK(plan.orders[2].quantity == dec("7"));
  CHECK(plan.orders[2].reason ==
        "fixed: add to target; also what Retirement sells to raise the cash it must give: it "
        "holds nothing else above target");
  CHECK(plan.cash_after[1].cash == Decimal());
}

TEST_CASE("withdrawal: the raise sells what stands above target, not a name the proposal buys") {
  // Regression: the raise took lots at a loss first, whatever the name, so
  // Retirement sold BND (under target, at a loss) while Brokerage bought BND.
  // Pool 1000 - 500 + 2000 + 500 = 3000; targets 1500 each. STK is 500 over
  // but inside the 20-point drift band (66.67% against 50%), so the rebalance
  // does not sell it; BND wants 1000. Retirement, 500 short, sells 5 STK (the
  // 500 above target); Brokerage's 1000 buys 10 BND. No name both ways.
  Portfolio p{{account(1, "Brokerage", TaxStatus::taxable, "1000"),
               account(2, "Retirement", TaxStatus::tax_deferred, "-500")}};
  hold(p.accounts[1], 1, 1, "2024-01-10", "20", "800");
  hold(p.accounts[1], 2, 2, "2026-03-02", "5", "600");
  HouseholdPrefs prefs;
  prefs.must_give[2] = dec("500");
  TradingRule trading;
  trading.drift_pct_points = dec("20");
  const auto plan = orders(p, {target(1, "STK", "0.5"), target(2, "BND", "0.5")}, two_quotes(),
                           trading, kAsOf, Explain::all, prefs);
  REQUIRE(plan.orders.size() == 2);
  CHECK(plan.orders[0].account == "Retirement");
  CHECK(plan.orders[0].symbol == "STK");
  CHECK(plan.orders[0].side == Side::sell);
  CHECK(plan.orders[0].quantity == dec("5"));
  CHECK(plan.orders[0].reason ==
        "fixed: sold to raise the cash Retirement must give (500.00 short)");
  CHECK(plan.orders[1].account == "Brokerage");
  CHECK(plan.orders[1].symbol == "BND");
  CHECK(plan.orders[1].side == Side::buy);
  CHECK(plan.orders[1].quantity == dec("10"));
  CHECK(plan.orders[1].reason == "fixed: add to target");
  CHECK(plan.cash_after[1].cash == Decimal());
}

TEST_CASE("gain cap: a cap below zero is refused") {
  CHECK_THROWS_WITH_AS(parse_plan("[tax]\ngain_cap = -1\n[[part]]\nname = \"b\"\n"
                                  "accounts = [\"A\"]\nfixed = { X = 100 }\n",
                                  "plan.toml", "."),
                       "plan.toml:2:12: key 'tax.gain_cap': -1 is below zero; a cap of 0 allows "
                       "no net gain at all",
                       InputError);
}

TEST_CASE("plan file: the tax keys are read with their defaults") {
  const auto plain = parse_plan("[[part]]\nname = \"b\"\naccounts = [\"A\"]\nfixed = { X = 100 }\n",
                                "plan.toml", ".");
  CHECK_FALSE(plain.tax.sell_deferred_first);
  CHECK_FALSE(plain.tax.gain_cap);
  CHECK_FALSE(plain.parts[0].place_deferred);
  const auto taxed = parse_plan(
      "[tax]\nsell_from = \"tax-deferred-first\"\ngain_cap = 2000.5\n[[part]]\nname = \"b\"\n"
      "accounts = [\"A\"]\nfixed = { X = 100 }\nplace = \"tax-deferred-first\"\n",
      "plan.toml", ".");
  CHECK(taxed.tax.sell_deferred_first);
  CHECK(*taxed.tax.gain_cap == dec("2000.5"));
  CHECK(taxed.parts[0].place_deferred);
}

TEST_CASE("plan file: an unknown place is refused naming the choices") {
  CHECK_THROWS_WITH_AS(parse_plan("[[part]]\nname = \"b\"\naccounts = [\"A\"]\n"
                                  "fixed = { X = 100 }\nplace = \"deferred\"\n",
                                  "plan.toml", "."),
                       "plan.toml:5:9: key 'part.place': must be \"any\" or \"tax-deferred-first\"",
                       InputError);
}

TEST_CASE("plan file: a gain cap too large for an exact decimal is refused at its key") {
  // Found by the plan fuzzer: the number's own error escaped without the file and line.
  CHECK_THROWS_WITH_AS(parse_plan("[tax]\ngain_cap = 2.5e101\n[[part]]\nname = \"b\"\n"
                                  "accounts = [\"A\"]\nfixed = { X = 100 }\n",
                                  "plan.toml", "."),
                       "plan.toml:2:12: key 'tax.gain_cap': 2.5e+101 is out of range for an exact "
                       "decimal",
                       InputError);
}

TEST_CASE("rule file: the tax keys are read with their defaults") {
  const auto plain = parse_rule("[scope]\naccounts = [\"A\"]\n", "rule.toml");
  CHECK_FALSE(plain.tax.any());
  CHECK_FALSE(plain.tax_keys());
  const auto taxed = parse_rule(
      "[scope]\naccounts = [\"A\", \"B\"]\n[tax]\nsell_from = \"tax-deferred-first\"\n"
      "gain_cap = 2000.5\n[[sleeve]]\nsymbol = \"BND\"\nweight_pct = 40\n"
      "place = \"tax-deferred-first\"\n",
      "rule.toml");
  CHECK(taxed.tax.sell_deferred_first);
  CHECK(*taxed.tax.gain_cap == dec("2000.5"));
  CHECK(taxed.weights.sleeves[0].place_deferred);
  CHECK(taxed.tax_keys());
}

TEST_CASE("rule file: a sleeve's unknown place is refused in the plan's words") {
  CHECK_THROWS_WITH_AS(parse_rule("[scope]\naccounts = [\"A\"]\n[[sleeve]]\nsymbol = \"BND\"\n"
                                  "weight_pct = 40\nplace = \"deferred\"\n",
                                  "rule.toml"),
                       "rule.toml:6: key 'sleeve.place': must be \"any\" or \"tax-deferred-first\"",
                       InputError);
}

TEST_CASE("rule file: a gain cap below zero or with three decimals is refused at its line") {
  CHECK_THROWS_WITH_AS(parse_rule("[scope]\naccounts = [\"A\"]\n[tax]\ngain_cap = -1\n", "r.toml"),
                       "r.toml:4: key 'tax.gain_cap': -1 is below zero; a cap of 0 allows no net "
                       "gain at all",
                       InputError);
  CHECK_THROWS_WITH_AS(
      parse_rule("[scope]\naccounts = [\"A\"]\n[tax]\ngain_cap = 10.125\n", "r.toml"),
      "r.toml:4: key 'tax.gain_cap': 10.125 has more than two decimals", InputError);
}

TEST_CASE("rule file: an unknown tax key is refused with the nearest one") {
  CHECK_THROWS_WITH_AS(
      parse_rule("[scope]\naccounts = [\"A\"]\n[tax]\nsell_form = \"any\"\n", "r.toml"),
      "r.toml:4: key 'tax.sell_form': unknown key; did you mean 'sell_from'?", InputError);
}
