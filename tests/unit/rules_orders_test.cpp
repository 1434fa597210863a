// Targets and orders on plain portfolios: weights, caps, sleeves, the guard
// rails, lot preferences and cash. Expected quantities are worked out by hand
// in the comments (floor of value / price to whole lots).
#include <doctest/doctest.h>

#include "core/error.h"
#include "rules/engine.h"
#include "rules/order_rounds.h"
#include "rules/order_steps.h"

using namespace keel;
using namespace keel::rules;

namespace {

const Date kAsOf = Date::parse("2024-05-31");

Decimal dec(const char* s) {
  return Decimal::parse(s);
}

Rule rule(const std::string& extra = "") {
  return parse_rule("[scope]\naccounts = [\"Main\"]\n" + extra, "r.toml");
}

Candidate name(std::int64_t id, const std::string& symbol, const char* value, bool held = false) {
  Candidate c;
  c.security_id = id;
  c.symbol = symbol;
  c.figure = Figure{dec(value), Date::parse("2024-03-31"), Date::parse("2024-04-30")};
  c.has_price = true;
  c.held = held;
  return c;
}

std::vector<Candidate> five(bool c_held = false) {
  return {name(1, "A", "6"), name(2, "B", "8"), name(3, "C", "10", c_held), name(4, "D", "12"),
          name(5, "E", "14")};
}

Target target(std::int64_t id, const std::string& symbol, const char* weight,
              const std::string& why = "z = -1.00 <= -0.50") {
  Target t;
  t.security_id = id;
  t.symbol = symbol;
  t.weight = dec(weight);
  t.why = why;
  return t;
}

AccountState account(std::int64_t id, const std::string& name, const char* cash) {
  AccountState a;
  a.id = id;
  a.name = name;
  a.cash = dec(cash);
  return a;
}

Quotes quotes(std::initializer_list<std::tuple<std::int64_t, const char*, const char*>> q) {
  Quotes out;
  for (const auto& [id, symbol, price] : q) out[id] = Quote{symbol, dec(price), true, Decimal(1)};
  return out;
}

}  // namespace

// ---------------------------------------------------------------- targets

TEST_CASE("targets: equal weights share what the sleeve leaves") {
  const Rule r = rule("[[sleeve]]\nsymbol = \"BOND\"\nweight_pct = 20\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {99}).list;
  REQUIRE(t.size() == 3);
  CHECK(t[0].symbol == "BOND");
  CHECK(t[0].weight == dec("0.2"));
  CHECK(t[0].why == "sleeve at 20.00%");
  CHECK(t[1].symbol == "A");
  CHECK(t[1].weight == dec("0.4"));
  CHECK(t[2].weight == dec("0.4"));
}

TEST_CASE("targets: equal weights at the cap to 12 places are not capped") {
  // 20% / 3 is 0.066666666667 to 12 places: the cap itself.
  const Rule r = rule(
      "[select]\nby = \"count\"\ncount = 3\n[weights]\nmax_weight_pct = 6.6666666667\n"
      "[[sleeve]]\nsymbol = \"BOND\"\nweight_pct = 80\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {99}).list;
  REQUIRE(t.size() == 4);
  for (std::size_t i = 1; i < 4; ++i) CHECK(t[i].weight == dec("0.066666666667"));
  CHECK(t[1].why == "z = -1.26, rank 1 <= 3");
}

TEST_CASE("targets: equal weights below the cap are the share over the names, to 12 places") {
  const Rule r =
      rule("[select]\nby = \"count\"\ncount = 3\n[[sleeve]]\nsymbol = \"BOND\"\nweight_pct = 80\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {99}).list;
  REQUIRE(t.size() == 4);
  for (std::size_t i = 1; i < 4; ++i) CHECK(t[i].weight == dec("0.066666666667"));
  CHECK(t[1].why == "z = -1.26, rank 1 <= 3");
}

TEST_CASE("targets: a tilt weighs cheaper names more, in proportion to exp(-z)") {
  const Rule r = rule("[select]\nby = \"count\"\ncount = 3\n[weights]\nscheme = \"tilt\"\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {}).list;
  REQUIRE(t.size() == 3);
  // exp(4/sqrt(10)), exp(2/sqrt(10)), 1, normalized (computed with Python's math.exp).
  CHECK(t[0].weight.to_double() == doctest::Approx(0.5514047011699162).epsilon(1e-10));
  CHECK(t[1].weight.to_double() == doctest::Approx(0.29295338253984105).epsilon(1e-10));
  CHECK(t[2].weight.to_double() == doctest::Approx(0.15564191629024277).epsilon(1e-10));
}

TEST_CASE("targets: a capped name's excess goes to the others in proportion") {
  const Rule r = rule(
      "[select]\nby = \"count\"\ncount = 3\n[weights]\nscheme = \"tilt\"\nmax_weight_pct = 50\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {}).list;
  CHECK(t[0].weight == dec("0.5"));
  CHECK(t[0].why == "z = -1.26, rank 1 <= 3 (capped at 50.00%)");
  CHECK(t[1].weight.to_double() == doctest::Approx(0.326523018970384).epsilon(1e-10));
  CHECK(t[2].weight.to_double() == doctest::Approx(0.17347698102961606).epsilon(1e-10));
}

TEST_CASE("targets: a cap the day's selection cannot fill holds nothing, and says why") {
  const Rule r = rule("[weights]\nmax_weight_pct = 40\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {});
  CHECK(t.list.empty());
  REQUIRE(t.refusal);
  CHECK(t.refusal->text(r) ==
        "r.toml:4: key 'weights.max_weight_pct': weights cannot sum to one on 2024-05-31: 2 "
        "selected names x 40.00% = 80.00% is less than the 100.00% they must fill");
}

TEST_CASE("targets: a refused screen gives no targets and its refusal") {
  const Rule r = rule("[select]\nz_max = -2\n[[sleeve]]\nsymbol = \"BOND\"\nweight_pct = 20\n");
  const auto t = targets(r, screen(r, kAsOf, five()), {99});
  CHECK(t.list.empty());
  REQUIRE(t.refusal);
  CHECK(t.refusal->key == "select.z_max");
}

TEST_CASE("targets: a held name that is not selected gets zero with the reason") {
  const Rule r = rule();
  const auto t = targets(r, screen(r, kAsOf, five(true)), {}).list;
  REQUIRE(t.size() == 3);
  CHECK(t[2].symbol == "C");
  CHECK(t[2].weight.is_zero());
  CHECK(t[2].why == "z = 0.00 > -0.50");
}

// ----------------------------------------------------------------- orders

TEST_CASE("orders: buys from cash round down to whole shares") {
  Portfolio p{{account(1, "Main", "10000")}};
  const auto plan = orders(p, {target(10, "X", "0.5"), target(11, "Y", "0.5")},
                           quotes({{10, "X", "30"}, {11, "Y", "70"}}), {}, kAsOf);
  REQUIRE(plan.orders.size() == 2);
  CHECK(plan.orders[0].symbol == "X");
  CHECK(plan.orders[0].quantity == Decimal(166));  // 5000 / 30 = 166.67
  CHECK(plan.orders[0].value == Decimal(4980));
  CHECK(plan.orders[0].reason == "z = -1.00 <= -0.50: new position");
  CHECK(plan.orders[1].quantity == Decimal(71));  // 5000 / 70 = 71.43
  CHECK(plan.cash_after_total == Decimal(50));
  CHECK(plan.turnover == dec("0.4975"));  // 9950 / 2 / 10000
}

TEST_CASE("orders: fees come out of the cash and targets allow for them") {
  Portfolio p{{account(1, "Main", "10000")}};
  TradingRule g;
  g.fee_fixed = Decimal(1);
  g.fee_bps = Decimal(10);
  const auto plan = orders(p, {target(10, "X", "0.5"), target(11, "Y", "0.5")},
                           quotes({{10, "X", "30"}, {11, "Y", "70"}}), g, kAsOf);
  REQUIRE(plan.orders.size() == 2);
  // Targets on 10000 - 11.95 of fees: 4994.02 each; 166 x 30 and 71 x 70 still fit.
  CHECK(plan.orders[0].quantity == Decimal(166));
  CHECK(plan.orders[0].fee == dec("5.98"));  // 1 + 0.001 x 4980
  CHECK(plan.orders[1].quantity == Decimal(71));
  CHECK(plan.orders[1].fee == dec("5.97"));
  CHECK(plan.estimated_fees == dec("11.95"));
  CHECK(plan.cash_after_total == dec("38.05"));
  CHECK(plan.invested_target == dec("9988.05"));
}

TEST_CASE("orders: sells come first and pay for the buys") {
  AccountState a = account(1, "Main", "0");
  a.holdings[10] = HoldingState{Decimal(100), {}};
  Portfolio p{{a}};
  const auto plan =
      orders(p, {target(11, "Y", "1"), target(10, "X", "0", "held; z = 0.90 > exit 0.50")},
             quotes({{10, "X", "50"}, {11, "Y", "25"}}), {}, kAsOf);
  REQUIRE(plan.orders.size() == 2);
  CHECK(plan.orders[0].side == Side::sell);
  CHECK(plan.orders[0].quantity == Decimal(100));
  CHECK(plan.orders[0].reason == "held; z = 0.90 > exit 0.50: sell all");
  CHECK(plan.orders[0].weight_now == Decimal(1));
  CHECK(plan.orders[1].side == Side::buy);
  CHECK(plan.orders[1].quantity == Decimal(200));
  CHECK(plan.cash_after_total.is_zero());
}

namespace {
// Three lots of X: old and cheap, recent and dear, recent and middling.
Portfolio three_lots() {
  AccountState a = account(1, "Main", "0");
  HoldingState h;
  h.quantity = Decimal(30);
  h.lots = {LotState{101, Date::parse("2020-01-02"), Decimal(10), Decimal(300)},
            LotState{102, Date::parse("2023-12-01"), Decimal(10), Decimal(600)},
            LotState{103, Date::parse("2024-03-01"), Decimal(10), Decimal(450)}};
  a.holdings[10] = h;
  return Portfolio{{a}};
}
// Trims X from 30 units to 20 at `price` (target 2/3 of the pool).
std::vector<LotTake> trim_lots(LotOrder order, const char* price) {
  TradingRule g;
  g.lot_order = order;
  const auto plan = orders(three_lots(), {target(10, "X", "0.666666666667")},
                           quotes({{10, "X", price}}), g, kAsOf);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].quantity == Decimal(10));
  return plan.orders[0].lots;
}
}  // namespace

TEST_CASE("orders: a sell takes the highest-cost lot first") {
  const auto lots = trim_lots(LotOrder::highest_cost, "70");
  REQUIRE(lots.size() == 1);
  CHECK(lots[0].lot_id == 102);
  CHECK(lots[0].est_gain == Decimal(100));  // 10 x 70 - 600
  CHECK_FALSE(lots[0].long_term);
}

TEST_CASE("orders: a sell takes the longest-held lot first") {
  const auto lots = trim_lots(LotOrder::long_held, "70");
  REQUIRE(lots.size() == 1);
  CHECK(lots[0].lot_id == 101);
  CHECK(lots[0].long_term);
}

TEST_CASE("orders: losses first, then long-term gains before short-term ones") {
  // At 50 lot 102 (unit cost 60) is at a loss.
  CHECK(trim_lots(LotOrder::losses_first, "50")[0].lot_id == 102);
  // At 70 every lot gains; the long-term lot 101 goes first, not the dearest.
  CHECK(trim_lots(LotOrder::losses_first, "70")[0].lot_id == 101);
}

TEST_CASE("orders: a sell across lots splits the cost in proportion") {
  TradingRule g;
  const auto plan =
      orders(three_lots(), {target(10, "X", "0.5")}, quotes({{10, "X", "70"}}), g, kAsOf);
  // 2100 pool, target 1050: sell 15 units, lot 102 whole then 5 of lot 103.
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].quantity == Decimal(15));
  REQUIRE(plan.orders[0].lots.size() == 2);
  CHECK(plan.orders[0].lots[1].lot_id == 103);
  CHECK(plan.orders[0].lots[1].quantity == Decimal(5));
  CHECK(plan.orders[0].lots[1].cost == Decimal(225));
}

namespace {
Portfolio drifted() {
  AccountState a = account(1, "Main", "4800");
  a.holdings[10] = HoldingState{Decimal(100), {}};  // 100 x 52 = 5200 of 10000
  return Portfolio{{a}};
}
}  // namespace

TEST_CASE("orders: a name inside the drift band is not traded") {
  TradingRule g;
  g.drift_pct_points = Decimal(3);
  const auto plan = orders(drifted(), {target(10, "X", "0.5"), target(11, "Y", "0.5")},
                           quotes({{10, "X", "52"}, {11, "Y", "10"}}), g, kAsOf);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].symbol == "Y");
  CHECK(plan.orders[0].quantity == Decimal(480));  // all the cash; a new position ignores the band
  REQUIRE(plan.skipped.size() == 1);
  CHECK(plan.skipped[0].symbol == "X");
  CHECK(plan.skipped[0].why == "within the drift band: 52.00% now, target 50.00%");
}

TEST_CASE("orders: a relative drift band is a share of the target weight") {
  TradingRule wide;
  wide.drift_rel_pct = Decimal(10);  // 2 points is within 10% of 50% (5 points)
  auto plan = orders(drifted(), {target(10, "X", "0.5"), target(11, "Y", "0.5")},
                     quotes({{10, "X", "52"}, {11, "Y", "10"}}), wide, kAsOf);
  CHECK(plan.orders.size() == 1);
  TradingRule narrow;
  narrow.drift_rel_pct = Decimal(3);  // 2 points is beyond 3% of 50% (1.5 points)
  plan = orders(drifted(), {target(10, "X", "0.5"), target(11, "Y", "0.5")},
                quotes({{10, "X", "52"}, {11, "Y", "10"}}), narrow, kAsOf);
  REQUIRE(plan.orders.size() == 2);
  CHECK(plan.orders[0].side == Side::sell);
  CHECK(plan.orders[0].quantity == Decimal(3));  // 200 over target / 52 = 3.8
  CHECK(plan.orders[0].reason == "z = -1.00 <= -0.50: trim to target");
}

TEST_CASE("orders: a trade below the minimum is skipped, an exit is not") {
  AccountState a = account(1, "Main", "9960");
  a.holdings[12] = HoldingState{Decimal(2), {}};  // 2 x 20 = 40, leaving
  TradingRule g;
  g.min_trade = Decimal(100);
  // X: target 40 at 40 a share is one share, below 100.
  const auto plan = orders(Portfolio{{a}},
                           {target(11, "Y", "0.996"), target(10, "X", "0.004"),
                            target(12, "Z", "0", "excluded: not positive (-1)")},
                           quotes({{10, "X", "40"}, {11, "Y", "10"}, {12, "Z", "20"}}), g, kAsOf);
  bool sold_z = false;
  for (const auto& o : plan.orders) {
    CHECK(o.symbol != "X");
    sold_z |= o.symbol == "Z" && o.side == Side::sell && o.quantity == Decimal(2);
  }
  CHECK(sold_z);
  REQUIRE(plan.skipped.size() == 1);
  CHECK(plan.skipped[0].why == "a buy of 40.00 is below the minimum trade (100)");
}

TEST_CASE("orders: the cash reserve stays in the account") {
  TradingRule g;
  g.cash_reserve_pct = Decimal(2);
  const auto plan = orders(Portfolio{{account(1, "Main", "10000")}}, {target(10, "X", "1")},
                           quotes({{10, "X", "10"}}), g, kAsOf);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].quantity == Decimal(980));
  CHECK(plan.cash_after[0].reserve == Decimal(200));
  CHECK(plan.cash_after_total == Decimal(200));
}

TEST_CASE("orders: quantities round down to the security's lot size") {
  Quotes q = quotes({{10, "X", "7"}});
  q[10].lot_size = Decimal(10);
  const auto plan =
      orders(Portfolio{{account(1, "Main", "1000")}}, {target(10, "X", "1")}, q, {}, kAsOf);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].quantity == Decimal(140));  // 142.86 down to tens
}

TEST_CASE("orders: fractional quantities go to four places") {
  TradingRule g;
  g.fractional = true;
  const auto plan = orders(Portfolio{{account(1, "Main", "1000")}}, {target(10, "X", "1")},
                           quotes({{10, "X", "7"}}), g, kAsOf);
  REQUIRE(plan.orders.size() == 1);
  CHECK(plan.orders[0].quantity == dec("142.8571"));
  CHECK(plan.orders[0].value == dec("999.9997"));
}

TEST_CASE("orders: a buy spills into the next account and never overspends") {
  Portfolio p{{account(1, "Taxable", "3000"), account(2, "Retirement", "2000")}};
  const auto plan = orders(p, {target(10, "X", "1")}, quotes({{10, "X", "100"}}), {}, kAsOf);
  REQUIRE(plan.orders.size() == 2);
  CHECK(plan.orders[0].account == "Taxable");
  CHECK(plan.orders[0].quantity == Decimal(30));
  CHECK(plan.orders[1].account == "Retirement");
  CHECK(plan.orders[1].quantity == Decimal(20));
  for (const auto& c : plan.cash_after) CHECK_FALSE(c.cash.is_negative());
}

TEST_CASE("orders: short of cash, buys share it in proportion and then fill") {
  // Pool 2000: H 10 x 100 held, target 850, sells 1 (cash 1100). X and Y want
  // 575 each: 1100 / 1150 of it is 550 each, so 18 x 30 = 540 and 7 x 70 = 490;
  // the 70 left goes to the largest gap first: Y (85 short) takes one more.
  AccountState a = account(1, "Main", "1000");
  a.holdings[12] = HoldingState{Decimal(10), {}};
  const auto plan =
      orders(Portfolio{{a}},
             {target(12, "H", "0.425"), target(10, "X", "0.2875"), target(11, "Y", "0.2875")},
             quotes({{10, "X", "30"}, {11, "Y", "70"}, {12, "H", "100"}}), {}, kAsOf);
  REQUIRE(plan.orders.size() == 3);
  CHECK(plan.orders[0].symbol == "H");
  CHECK(plan.orders[0].side == Side::sell);
  CHECK(plan.orders[0].quantity == Decimal(1));
  CHECK(plan.orders[1].symbol == "X");
  CHECK(plan.orders[1].quantity == Decimal(18));
  CHECK(plan.orders[2].symbol == "Y");
  CHECK(plan.orders[2].quantity == Decimal(8));
  CHECK(plan.cash_after_total.is_zero());
}

TEST_CASE("orders: a position without a close is valued but not traded") {
  AccountState a = account(1, "Main", "1000");
  a.holdings[12] = HoldingState{Decimal(5), {}};
  Quotes q = quotes({{10, "X", "10"}, {12, "Q", "8"}});
  q[12].tradable = false;
  const auto plan = orders(
      Portfolio{{a}}, {target(10, "X", "1"), target(12, "Q", "0", "not in the rule's universe")}, q,
      {}, kAsOf);
  CHECK(plan.pool_value == Decimal(1040));
  REQUIRE(plan.skipped.size() == 1);
  CHECK(plan.skipped[0].symbol == "Q");
  CHECK(plan.skipped[0].why ==
        "no close on or before 2024-05-31; valued at the last trade price, not traded");
}

// ------------------------------------------------------ the steps of orders()

TEST_CASE("order steps: each account's reserve is set on its value after the fee guess") {
  AccountState a = account(1, "Main", "1000");
  a.holdings[10] = HoldingState{Decimal(10), {}};  // 10 x 50 = 500
  Portfolio p{{a, account(2, "Spare", "200")}};
  TradingRule g;
  g.cash_reserve_pct = Decimal(2);
  const auto pool = steps::value_pool(p, quotes({{10, "X", "50"}}), g, {Decimal(10), Decimal()});
  CHECK(pool.value == Decimal(1700));
  // 2% of 1490 = 29.80 and of 200 = 4.00; invested 1690 - 33.80.
  CHECK(pool.reserve == std::vector<Decimal>{dec("29.8"), Decimal(4)});
  CHECK(pool.cash == std::vector<Decimal>{Decimal(1000), Decimal(200)});
  CHECK(pool.invested_target == dec("1656.2"));
}

TEST_CASE("order steps: the work list holds the targets, then other holdings by symbol") {
  AccountState a = account(1, "Main", "500");
  a.holdings[10] = HoldingState{Decimal(10), {}};
  a.holdings[12] = HoldingState{Decimal(5), {}};
  a.holdings[13] = HoldingState{Decimal(2), {}};
  const Portfolio p{{a}};
  const auto q = quotes({{10, "X", "50"}, {11, "Y", "20"}, {12, "Z", "10"}, {13, "W", "25"}});
  const std::vector<Target> t{target(10, "X", "0.5"), target(11, "Y", "0.5")};
  const auto pool = steps::value_pool(p, q, {}, {Decimal()});
  const auto work = steps::work_list(p, t, q, pool);
  REQUIRE(work.size() == 4);
  CHECK(work[0].quote->symbol == "X");
  CHECK(work[1].quote->symbol == "Y");
  CHECK(work[2].quote->symbol == "W");
  CHECK(work[3].quote->symbol == "Z");
  CHECK(work[3].why == "not among the rule's targets");
  // Pool 500 + 500 + 50 + 50 = 1100; X: 500 now (0.454545), target 550 (0.5).
  CHECK(work[0].now_value == Decimal(500));
  CHECK(work[0].target_value == Decimal(550));
  CHECK(work[0].w_now == dec("0.454545"));
  CHECK(work[0].w_target == dec("0.5"));
  CHECK(work[3].target_value.is_zero());
}

TEST_CASE("order steps: decide trims in whole lots, skips a small trim, never a small exit") {
  steps::Work x;
  const Quote q{"X", Decimal(30), true, Decimal(1)};
  x.quote = &q;
  x.why = "z = -1.00 <= -0.50";
  x.held = Decimal(10);
  x.now_value = Decimal(300);
  x.target_value = Decimal(205);  // 95 above target: 3 units at 30
  x.w_now = dec("0.3");
  x.w_target = dec("0.205");
  TradingRule g;
  auto d = steps::decide(x, g, kAsOf);
  CHECK(d.kind == steps::Decision::Kind::sell);
  CHECK(d.sell_units == Decimal(3));
  CHECK(d.reason == "z = -1.00 <= -0.50: trim to target");
  g.min_trade = Decimal(100);
  d = steps::decide(x, g, kAsOf);
  CHECK(d.kind == steps::Decision::Kind::skip);
  CHECK(d.why == "a sell of 90.00 is below the minimum trade (100)");
  x.target_value = Decimal();  // an exit sells everything, however small
  d = steps::decide(x, g, kAsOf);
  CHECK(d.kind == steps::Decision::Kind::sell);
  CHECK(d.sell_units == Decimal(10));
  CHECK(d.reason == "z = -1.00 <= -0.50: sell all");
}

TEST_CASE("order steps: buys short of cash share it in proportion to their needs") {
  const Portfolio p{{account(1, "Main", "1000")}};
  const Quote qx{"X", Decimal(10), true, Decimal(1)}, qy{"Y", Decimal(10), true, Decimal(1)};
  steps::Work x, y;
  x.quote = &qx;
  x.security_id = 10;
  y.quote = &qy;
  y.security_id = 11;
  // X wants 1500 and Y 500: the 1000 of cash goes 750 and 250.
  const std::vector<steps::BuyWish> wishes{{&x, Decimal(1500), "x"}, {&y, Decimal(500), "y"}};
  std::vector<Decimal> cash{Decimal(1000)};
  const auto buys = steps::buy_orders(wishes, p, cash, {Decimal()}, {});
  REQUIRE(buys.orders.size() == 2);
  CHECK(buys.orders[0].quantity == Decimal(75));
  CHECK(buys.orders[1].quantity == Decimal(25));
  CHECK(buys.skipped.empty());
  CHECK(cash[0].is_zero());
}

namespace {

// One name to buy, priced by `quote`.
steps::Work to_buy(const Quote& quote, std::int64_t id) {
  steps::Work w;
  w.quote = &quote;
  w.security_id = id;
  return w;
}

// Buys `wishes` from one account holding `cash` and no reserve.
steps::Buys buy_from(const char* cash, const std::vector<steps::BuyWish>& wishes,
                     const TradingRule& trading, std::vector<Decimal>& left) {
  const Portfolio p{{account(1, "Main", "0")}};
  left = {dec(cash)};
  return steps::buy_orders(wishes, p, left, {Decimal()}, trading);
}

// The same orders: names, quantities, values, fees and reasons.
void check_same_orders(const std::vector<Order>& got, const std::vector<Order>& want) {
  REQUIRE(got.size() == want.size());
  for (std::size_t i = 0; i < want.size(); ++i) {
    CHECK(got[i].symbol == want[i].symbol);
    CHECK(got[i].quantity == want[i].quantity);
    CHECK(got[i].value == want[i].value);
    CHECK(got[i].fee == want[i].fee);
    CHECK(got[i].reason == want[i].reason);
  }
}

// Main holds 10 of H at 100 and 1000 of cash; the targets: X 0.6 and H 0.4.
struct TwoNames {
  Portfolio p;
  std::vector<Target> t;
  Quotes q;
};
TwoNames two_names() {
  AccountState a = account(1, "Main", "1000");
  a.holdings[12] = HoldingState{Decimal(10), {}};
  return {Portfolio{{a}},
          {target(10, "X", "0.6"), target(12, "H", "0.4")},
          quotes({{10, "X", "30"}, {12, "H", "100"}})};
}

}  // namespace

TEST_CASE("order steps: a buy gets one lot exactly when its cost with fees fits the cash") {
  // One unit of X at 100 costs 100 + (1 + 0.1) of fees = 101.10. Cash of 101.10
  // buys it; a cent less, or far less, buys nothing and says why.
  const Quote qx{"X", Decimal(100), true, Decimal(1)};
  const steps::Work x = to_buy(qx, 10);
  TradingRule g;
  g.fee_fixed = Decimal(1);
  g.fee_bps = Decimal(10);
  const std::vector<steps::BuyWish> wishes{{&x, Decimal(1000), "x"}};
  std::vector<Decimal> cash;
  for (const char* fits : {"101.10", "101.11", "201.19"}) {
    const auto buys = buy_from(fits, wishes, g, cash);
    REQUIRE(buys.orders.size() == 1);
    CHECK(buys.orders[0].quantity == Decimal(1));
    CHECK(buys.orders[0].fee == dec("1.1"));
    CHECK(cash[0] == dec(fits) - dec("101.1"));
  }
  for (const char* short_of : {"101.09", "100.90", "50", "1"}) {
    const auto buys = buy_from(short_of, wishes, g, cash);
    CHECK(buys.orders.empty());
    REQUIRE(buys.skipped.size() == 1);
    CHECK(buys.skipped[0].why == "less than one lot (1 at 100) fits the cash to spend");
    CHECK(cash[0] == dec(short_of));
  }
}

TEST_CASE("order steps: a fractional buy gets one step exactly when it fits the cash") {
  // A step of 0.0001 of Y at 50 is worth 0.005; with a fixed fee of 1 it costs 1.005.
  const Quote qy{"Y", Decimal(50), true, Decimal(1)};
  const steps::Work y = to_buy(qy, 11);
  TradingRule g;
  g.fractional = true;
  g.fee_fixed = Decimal(1);
  const std::vector<steps::BuyWish> wishes{{&y, Decimal(10), "y"}};
  std::vector<Decimal> cash;
  auto buys = buy_from("1.005", wishes, g, cash);
  REQUIRE(buys.orders.size() == 1);
  CHECK(buys.orders[0].quantity == dec("0.0001"));
  buys = buy_from("1.0049", wishes, g, cash);
  CHECK(buys.orders.empty());
  REQUIRE(buys.skipped.size() == 1);
  CHECK(buys.skipped[0].why == "less than one lot (0.0001 at 50) fits the cash to spend");
}

TEST_CASE("orders: buy_cost is a step's cost, worked out once for every fee round") {
  // X at 100 in lots of 1 with 10 bp: a unit costs 100.1, a step is worth
  // 100, and below 0.999 x 100.1 = 99.9999 (less the fixed fee) no step fits.
  const Quote qx{"X", Decimal(100), true, Decimal(1)};
  TradingRule g;
  g.fee_fixed = Decimal(1);
  g.fee_bps = Decimal(10);
  auto c = buy_cost(qx, g);
  CHECK(c.step == Decimal(1));
  CHECK(c.unit == dec("100.1"));
  CHECK(c.one_step == Decimal(100));
  REQUIRE(c.no_step_below);
  CHECK(*c.no_step_below == dec("99.9999"));
  // Fractional steps of 10^-4: worth 0.01.
  g.fractional = true;
  c = buy_cost(qx, g);
  CHECK(c.step == dec("0.0001"));
  CHECK(c.one_step == dec("0.01"));
}

TEST_CASE("orders: buys in orders() are the buys of the buy_orders step") {
  // orders() takes each step's cost from buy_cost() once; buy_orders() alone
  // works it out itself. X at 37.13 and Y at 251.70, from 5000.
  const Portfolio p{{account(1, "Main", "5000")}};
  const std::vector<Target> t{target(10, "X", "0.4"), target(11, "Y", "0.6")};
  const auto q = quotes({{10, "X", "37.13"}, {11, "Y", "251.7"}});
  TradingRule g;
  g.fee_fixed = dec("4.95");
  g.fee_bps = Decimal(7);
  const auto plan = orders(p, t, q, g, kAsOf);
  REQUIRE(plan.orders.size() == 2);
  // The last round's targets: what the plan's fees leave invested.
  const steps::Work x = to_buy(q.at(10), 10), y = to_buy(q.at(11), 11);
  const Decimal invested = Decimal(5000) - plan.estimated_fees;
  const std::vector<steps::BuyWish> wishes{{&x, (dec("0.4") * invested).rounded(2), "x"},
                                           {&y, (dec("0.6") * invested).rounded(2), "y"}};
  std::vector<Decimal> cash;
  const auto buys = buy_from("5000", wishes, g, cash);
  REQUIRE(buys.orders.size() == 2);
  for (std::size_t i = 0; i < 2; ++i) {
    CHECK(buys.orders[i].quantity == plan.orders[i].quantity);
    CHECK(buys.orders[i].fee == plan.orders[i].fee);
  }
  // 1994.76 and 2992.14 wanted: X 53 units, Y 11.
  CHECK(plan.orders[0].quantity == Decimal(53));
  CHECK(plan.orders[1].quantity == Decimal(11));
}

TEST_CASE("order steps: aim rounds each target value to the cent, ties to even") {
  // Expected values from Python's decimal module (quantize, ROUND_HALF_EVEN).
  auto aimed = [](const char* weight, const char* invested) {
    const Target t = target(10, "X", weight);
    const Quote q{"X", Decimal(10), true, Decimal(1)};
    std::vector<steps::Work> work(1);
    work[0].quote = &q;
    work[0].target = &t;
    steps::PoolValue pool;
    pool.value = dec(invested) + Decimal(1);
    pool.invested_target = dec(invested);
    steps::aim(work, pool, true);
    return work[0].target_value.str();
  };
  CHECK(aimed("0.125", "0.2") == "0.02");  // 0.025
  CHECK(aimed("0.375", "0.2") == "0.08");  // 0.075
  CHECK(aimed("-0.125", "0.2") == "-0.02");
  // 2173913043 x 9876543210 is past a machine word: 214707.46103972088030.
  CHECK(aimed("0.002173913043", "98765432.10") == "214707.46");
  CHECK(aimed("0.5", "1000") == "500");
}

TEST_CASE("order steps: aiming again sets the target values on the new pool") {
  // The fee rounds of orders() aim the same work list at pools that differ
  // only in their invested target.
  const auto [p, t, q] = two_names();
  auto pool = steps::value_pool(p, q, {}, {Decimal()});
  auto work = steps::work_names(p, t, q, pool.value);
  steps::aim(work, pool, true);
  CHECK(work[0].target_value == Decimal(1200));
  CHECK(work[0].w_target == dec("0.6"));
  CHECK(work[1].w_now == dec("0.5"));
  pool.invested_target = Decimal(1990);
  steps::aim(work, pool, false);
  CHECK(work[0].target_value == Decimal(1194));
  CHECK(work[0].w_target == dec("0.597"));
  CHECK(work[1].target_value == Decimal(796));
  CHECK(work[1].w_target == dec("0.398"));
  CHECK(work[1].w_now == dec("0.5"));
  const auto fresh = steps::work_list(p, t, q, pool);
  REQUIRE(fresh.size() == work.size());
  for (std::size_t i = 0; i < work.size(); ++i) {
    CHECK(fresh[i].target_value == work[i].target_value);
    CHECK(fresh[i].w_target == work[i].w_target);
  }
}

TEST_CASE("order steps: aim says whether it set any target value anew") {
  const auto [p, t, q] = two_names();
  auto pool = steps::value_pool(p, q, {}, {Decimal()});
  auto work = steps::work_names(p, t, q, pool.value);
  CHECK(steps::aim(work, pool, true));
  CHECK_FALSE(steps::aim(work, pool, false));
  // 0.6 x 1999.999 and 0.4 x 1999.999 round to the cents of 0.6 x 2000 and 0.4 x 2000.
  pool.invested_target = dec("1999.999");
  CHECK_FALSE(steps::aim(work, pool, false));
  CHECK(work[0].target_value == Decimal(1200));
  pool.invested_target = Decimal(1990);
  CHECK(steps::aim(work, pool, false));
  CHECK(work[0].target_value == Decimal(1194));
  CHECK(steps::aim(work, pool, true));
}

TEST_CASE("orders: a fee round whose targets are the last round's keeps its orders") {
  // 1007 of cash, four names at a quarter each, fees 0.10 + 5 bp. Guess 0:
  // fees 0.89. Guess 0.89: targets 251.53 each (a quarter of 1006.11),
  // fees 0.88. Guess 0.88: a quarter of 1006.12 is 251.53 again, so the
  // orders are those of guess 0.89, and the invested target is 1006.12.
  const Portfolio p{{account(1, "Main", "1007")}};
  const std::vector<Target> t{target(10, "W", "0.25"), target(11, "X", "0.25"),
                              target(12, "Y", "0.25"), target(13, "Z", "0.25")};
  const auto q =
      quotes({{10, "W", "7.13"}, {11, "X", "12.5"}, {12, "Y", "3.07"}, {13, "Z", "41.2"}});
  TradingRule g;
  g.fee_fixed = dec("0.1");
  g.fee_bps = Decimal(5);
  // The premise: aimed at guess 0.89 and then at 0.88, no target value changes.
  const auto values = steps::account_values(p, q);
  auto work = steps::work_names(p, t, q, Decimal(1007));
  steps::aim(work, steps::pool_of(p, values, g, {dec("0.89")}), true);
  CHECK(work[0].target_value == dec("251.53"));
  CHECK_FALSE(steps::aim(work, steps::pool_of(p, values, g, {dec("0.88")}), false));

  const auto plan = orders(p, t, q, g, kAsOf);
  CHECK(plan.estimated_fees == dec("0.88"));
  CHECK(plan.invested_target == dec("1006.12"));
  // The orders are the buy step's on those targets.
  const steps::Work w = to_buy(q.at(10), 10), x = to_buy(q.at(11), 11), y = to_buy(q.at(12), 12),
                    z = to_buy(q.at(13), 13);
  const Decimal quarter = dec("251.53");
  std::vector<steps::BuyWish> wishes{{&w, quarter, t[0].why + ": new position"},
                                     {&x, quarter, t[1].why + ": new position"},
                                     {&y, quarter, t[2].why + ": new position"},
                                     {&z, quarter, t[3].why + ": new position"}};
  std::vector<Decimal> cash;
  const auto buys = buy_from("1007", wishes, g, cash);
  check_same_orders(plan.orders, buys.orders);
  Decimal fees;
  for (const auto& o : buys.orders) fees += o.fee;
  CHECK(fees == dec("0.88"));
  const auto only = orders_only(p, t, q, g, kAsOf);
  check_same_orders(only.orders, plan.orders);
  CHECK(only.invested_target == dec("1006.12"));
}

TEST_CASE("orders: without explanations a buy that gets nothing is skipped without words") {
  // The cash of 50 buys no unit of X at 100: the skip names X, and says why
  // only when asked to.
  const Portfolio p{{account(1, "Main", "50")}};
  const auto q = quotes({{10, "X", "100"}});
  const auto told = orders(p, {target(10, "X", "1")}, q, {}, kAsOf);
  REQUIRE(told.skipped.size() == 1);
  CHECK(told.skipped[0].why == "less than one lot (1 at 100) fits the cash to spend");
  const auto quiet = orders(p, {target(10, "X", "1")}, q, {}, kAsOf, Explain::none);
  REQUIRE(quiet.skipped.size() == 1);
  CHECK(quiet.skipped[0].symbol == "X");
  CHECK(quiet.skipped[0].why.empty());
  CHECK(quiet.orders.empty());
}

TEST_CASE("orders: orders_only gives the orders of orders() without the summary") {
  const auto [p, t, q] = two_names();
  TradingRule g;
  g.fee_fixed = Decimal(1);
  g.fee_bps = Decimal(5);
  const auto full = orders(p, t, q, g, kAsOf);
  const auto only = orders_only(p, t, q, g, kAsOf);
  REQUIRE(!full.orders.empty());
  check_same_orders(only.orders, full.orders);
  CHECK(only.pool_value == full.pool_value);
  CHECK(only.invested_target == full.invested_target);
  CHECK(full.estimated_fees.is_positive());
  CHECK(only.estimated_fees.is_zero());
  CHECK(only.weights_after.empty());
  CHECK(only.cash_after.empty());
}

TEST_CASE("orders: orders_only lists no skips") {
  // The cash of 50 buys no unit of X at 100: orders() names X as skipped;
  // orders_only(), whose runs only apply the orders, lists nothing.
  const Portfolio p{{account(1, "Main", "50")}};
  const auto q = quotes({{10, "X", "100"}});
  const auto full = orders(p, {target(10, "X", "1")}, q, {}, kAsOf);
  REQUIRE(full.skipped.size() == 1);
  const auto only = orders_only(p, {target(10, "X", "1")}, q, {}, kAsOf);
  CHECK(only.skipped.empty());
  CHECK(only.orders.empty());
}

TEST_CASE("buy step: each account's cash comes down by what its orders cost there") {
  // 250 of X at 100 with a fee of 1: one unit in Main (150 to spend), one in
  // Spare (120), and the 50 left is less than a unit.
  const Portfolio p{{account(1, "Main", "0"), account(2, "Spare", "0")}};
  const Quote quote{"X", dec("100"), true, Decimal(1)};
  const steps::Work x = to_buy(quote, 10);
  TradingRule g;
  g.fee_fixed = Decimal(1);
  std::vector<Decimal> cash{dec("150"), dec("120")};
  const auto buys =
      steps::buy_orders({{&x, dec("250"), "wanted"}}, p, cash, {Decimal(), Decimal()}, g);
  REQUIRE(buys.orders.size() == 2);
  CHECK(buys.orders[0].account == "Main");
  CHECK(buys.orders[1].account == "Spare");
  CHECK(buys.orders[1].quantity == Decimal(1));
  CHECK(cash == std::vector<Decimal>{dec("49"), dec("19")});
  CHECK(buys.skipped.empty());
}

namespace {

// One account holding 7 X at 12.5, without lots; fees 1 + 10 bp.
struct SevenHeld {
  Portfolio p;
  Quote q{"X", dec("12.5"), true, Decimal(1)};
  steps::Work x;
  TradingRule g;
  SevenHeld() {
    AccountState a = account(1, "Main", "0");
    a.holdings[10] = HoldingState{Decimal(7), {}};
    p.accounts.push_back(a);
    x.security_id = 10;
    x.quote = &q;
    g.fee_fixed = Decimal(1);
    g.fee_bps = Decimal(10);
  }
};

}  // namespace

TEST_CASE("order steps: a sell from one account without lots is one order of at most its units") {
  const SevenHeld h;
  const auto& [p, q, x, g] = h;
  // 4 of 7 units: 4 x 12.5 = 50, fee 1 + 0.05 = 1.05.
  auto out = steps::sell_orders(x, Decimal(4), "trim", p, g, kAsOf);
  REQUIRE(out.size() == 1);
  CHECK(out[0].account == "Main");
  CHECK(out[0].side == Side::sell);
  CHECK(out[0].quantity == Decimal(4));
  CHECK(out[0].value == Decimal(50));
  CHECK(out[0].fee == dec("1.05"));
  CHECK(out[0].reason == "trim");
  CHECK(out[0].lots.empty());
  // Asked for more than it holds: the 7 units held, 87.50, fee 1.0875 -> 1.09.
  out = steps::sell_orders(x, Decimal(9), "exit", p, g, kAsOf);
  REQUIRE(out.size() == 1);
  CHECK(out[0].quantity == Decimal(7));
  CHECK(out[0].fee == dec("1.09"));
  CHECK(steps::sell_orders(x, Decimal(), "none", p, g, kAsOf).empty());
}

TEST_CASE("orders: the summary's cash and values after are those of the orders applied") {
  AccountState a = account(1, "Taxable", "100");
  a.holdings[10] = HoldingState{Decimal(20), {}};  // 20 x 50
  AccountState b = account(2, "Retirement", "900");
  b.holdings[10] = HoldingState{Decimal(4), {}};
  b.holdings[11] = HoldingState{Decimal(10), {}};  // 10 x 30, not a target: sold
  const Portfolio p{{a, b}};
  TradingRule g;
  g.fee_fixed = Decimal(1);
  const auto q = quotes({{10, "X", "50"}, {11, "Y", "30"}, {12, "Z", "8"}});
  const auto plan = orders(p, {target(10, "X", "0.5"), target(12, "Z", "0.5")}, q, g, kAsOf);
  const Portfolio after = apply(p, plan.orders);
  REQUIRE(plan.cash_after.size() == 2);
  Decimal total;
  for (std::size_t i = 0; i < 2; ++i) {
    CHECK(plan.cash_after[i].account == p.accounts[i].name);
    CHECK(plan.cash_after[i].cash == after.accounts[i].cash);
    total += after.accounts[i].cash;
  }
  CHECK(plan.cash_after_total == total);
  // Y, sold out and without a target, is not listed.
  REQUIRE(plan.weights_after.size() == 2);
  for (const auto& w : plan.weights_after) {
    Decimal value;
    for (const auto& acct : after.accounts)
      if (const auto it = acct.holdings.find(w.security_id); it != acct.holdings.end())
        value += it->second.quantity * q.at(w.security_id).price;
    CAPTURE(w.symbol);
    CHECK(w.value == value);
    CHECK(w.value.is_positive());
  }
}

TEST_CASE("order steps: sells are added after the orders already made, as made alone") {
  const SevenHeld h;
  const auto& [p, q, x, g] = h;
  std::vector<Order> out(1);
  out[0].symbol = "EARLIER";
  out[0].quantity = Decimal(3);
  steps::sell_orders(x, Decimal(4), "trim", p, g, kAsOf, nullptr, out);
  REQUIRE(out.size() == 2);
  CHECK(out[0].symbol == "EARLIER");
  CHECK(out[0].quantity == Decimal(3));
  const auto alone = steps::sell_orders(x, Decimal(4), "trim", p, g, kAsOf);
  REQUIRE(alone.size() == 1);
  CHECK(out[1].symbol == "X");
  CHECK(out[1].quantity == alone[0].quantity);
  CHECK(out[1].value == alone[0].value);
  CHECK(out[1].fee == alone[0].fee);
  CHECK(out[1].reason == alone[0].reason);
  // Nothing to sell adds nothing.
  steps::sell_orders(x, Decimal(), "none", p, g, kAsOf, nullptr, out);
  CHECK(out.size() == 2);
}

TEST_CASE("order steps: names of one weight are aimed as each would be alone") {
  // Equal weights share one product and one quotient; a different weight
  // between them is worked out for itself. 0.3 x 1990 = 597 and
  // 0.4 x 1990 = 796, on a pool of 2000: weights 0.2985 and 0.398.
  const Quote q{"X", Decimal(10), true, Decimal(1)};
  const std::vector<Target> t{target(10, "A", "0.3"), target(11, "B", "0.3"),
                              target(12, "C", "0.4"), target(13, "D", "0.3")};
  std::vector<steps::Work> work(5);
  for (std::size_t i = 0; i < work.size(); ++i) {
    work[i].quote = &q;
    if (i < t.size()) work[i].target = &t[i];  // the last: held, not a target
  }
  steps::PoolValue pool;
  pool.value = Decimal(2000);
  pool.invested_target = Decimal(1990);
  CHECK(steps::aim(work, pool, true));
  const char* values[] = {"597", "597", "796", "597", "0"};
  const char* weights[] = {"0.2985", "0.2985", "0.398", "0.2985", "0"};
  for (std::size_t i = 0; i < work.size(); ++i) {
    CAPTURE(i);
    CHECK(work[i].target_value == dec(values[i]));
    CHECK(work[i].w_target == dec(weights[i]));
  }
  // Aimed again at 1980: 594 and 792; each as a work list of its own name.
  pool.invested_target = Decimal(1980);
  CHECK(steps::aim(work, pool, false));
  for (std::size_t i = 0; i < work.size(); ++i) {
    std::vector<steps::Work> alone{work[i]};
    alone[0].target_value = Decimal();
    steps::aim(alone, pool, true);
    CAPTURE(i);
    CHECK(work[i].target_value == alone[0].target_value);
    CHECK(work[i].w_target == alone[0].w_target);
  }
  CHECK(work[0].target_value == Decimal(594));
  CHECK(work[2].target_value == Decimal(792));
}

TEST_CASE("order steps: target ids are sorted and say whether a security is named twice") {
  auto ids =
      steps::target_ids({target(12, "Y", "0.5"), target(10, "W", "0.25"), target(11, "X", "0.25")});
  CHECK(ids.sorted == std::vector<std::int64_t>{10, 11, 12});
  CHECK_FALSE(ids.repeats);
  CHECK(ids.has(11));
  CHECK_FALSE(ids.has(13));
  ids =
      steps::target_ids({target(12, "Y", "0.5"), target(10, "W", "0.25"), target(12, "Y", "0.25")});
  CHECK(ids.repeats);
  CHECK(steps::target_ids({}).sorted.empty());
}
