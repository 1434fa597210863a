// Corporate actions in the back-test's simulated pool and in the signal
// check. An invented market of flat closes (ALDER 10, BIRCH 20, CEDAR 40,
// OAKEN 5): the rule holds ALDER, BIRCH and CEDAR at equal weight from the
// end of January, 90,000 in all, so 3,000 ALDER, 1,500 BIRCH and 750 CEDAR,
// and each expectation below is worked out by hand from the action's figures
// and docs/backtest.md.
#include <doctest/doctest.h>

#include <algorithm>
#include <string>
#include <tuple>
#include <vector>

#include "backtest/backtest.h"
#include "backtest/signal.h"
#include "ledger_fixture.h"
#include "rules/rule.h"
#include "store/action_store.h"

namespace {

using keel::ActionKind;
using keel::CorporateAction;
using keel::Date;
using keel::Decimal;
using keel::testing::day;
using keel::testing::dec;
namespace bt = keel::backtest;

constexpr const char* kHoldAll = R"(
name = "Hold the three"
[scope]
accounts = ["Sim"]
symbols = ["ALDER", "BIRCH", "CEDAR"]
[screen]
metric = "pe"
min_names = 2
[select]
by = "top_pct"
top_pct = 100
)";

struct FlatMarket {
  keel::testing::LedgerFixture f;
  FlatMarket() {
    const std::vector<std::pair<std::string, std::string>> names{
        {"ALDER", "10"}, {"BIRCH", "20"}, {"CEDAR", "40"}, {"OAKEN", "5"}};
    std::vector<std::tuple<std::string, std::string, std::string>> rows;
    for (const auto& [symbol, close] : names) {
      f.security(symbol);
      for (Date d = day("2024-01-01"); d <= day("2024-03-29"); d = d.plus_days(1)) {
        const int wd = (d.days_since_epoch() + 4) % 7;  // 0 = Sunday
        if (wd != 0 && wd != 6) rows.emplace_back(symbol, d.str(), close);
      }
    }
    f.closes(rows);
    f.figures("pe", {{"ALDER", "2023-12-31", "2024-01-02", "5"},
                     {"BIRCH", "2023-12-31", "2024-01-02", "10"},
                     {"CEDAR", "2023-12-31", "2024-01-02", "15"},
                     {"OAKEN", "2023-12-31", "2024-01-02", "12"}});
  }
  std::int64_t id(const std::string& symbol) {
    return keel::store::security_with_symbol(f.db, symbol).id;
  }
  // An action on ALDER on Monday 2024-02-12.
  std::int64_t act(ActionKind kind, std::optional<std::string> target,
                   std::optional<const char*> ratio, std::optional<const char*> cash,
                   std::optional<const char*> in_lieu = std::nullopt) {
    CorporateAction a;
    a.security_id = id("ALDER");
    a.date = day("2024-02-12");
    a.kind = kind;
    if (target) a.target_id = id(*target);
    if (ratio) a.ratio = dec(*ratio);
    if (cash) a.cash = dec(*cash);
    if (in_lieu) a.in_lieu = dec(*in_lieu);
    keel::store::WriteTransaction tx(f.db);
    const auto action_id = keel::store::insert_action(f.db, a);
    tx.commit();
    return action_id;
  }
  bt::Result run(bool frictionless = true) {
    bt::Request req;
    req.from = day("2024-01-01");
    req.to = day("2024-03-29");
    req.start_value = Decimal(90000);
    req.frictionless = frictionless;
    return bt::run(f.db, keel::rules::parse_rule(kHoldAll, "hold.toml"), req);
  }
};

const bt::CurvePoint& on(const bt::StrategyRun& run, const char* d) {
  const auto it = std::find_if(run.curve.begin(), run.curve.end(),
                               [&](const bt::CurvePoint& p) { return p.day == day(d); });
  REQUIRE(it != run.curve.end());
  return *it;
}

}  // namespace

TEST_CASE("backtest actions: without an action the flat pool keeps its value") {
  FlatMarket m;
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("90000"));
  CHECK(on(r.rule, "2024-02-12").names == 3);
}

TEST_CASE("backtest actions: a delisting pays its cash and the name leaves the pool") {
  FlatMarket m;
  m.act(ActionKind::delisting, std::nullopt, std::nullopt, "4");
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-09").value == dec("90000"));
  CHECK(on(r.rule, "2024-02-12").value == dec("72000"));  // 3,000 x 4 + 30,000 + 30,000
  CHECK(on(r.rule, "2024-02-12").cash == dec("12000"));
  CHECK(on(r.rule, "2024-02-12").names == 2);
  // Its last close (10) no longer counts on any later day.
  CHECK(on(r.rule, "2024-02-28").value == dec("72000"));
}

TEST_CASE("backtest actions: a delisting that pays nothing leaves nothing") {
  FlatMarket m;
  m.act(ActionKind::delisting, std::nullopt, std::nullopt, "0");
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("60000"));
  CHECK(on(r.rule, "2024-02-12").names == 2);
}

TEST_CASE("backtest actions: a delisted name leaves the universe from its day") {
  FlatMarket m;
  m.act(ActionKind::delisting, std::nullopt, std::nullopt, "4");
  const auto r = m.run();
  REQUIRE(r.rule.rebalances.size() == 3);
  CHECK(r.rule.rebalances[0].passed == 3);
  CHECK(r.rule.rebalances[1].passed == 2);  // 2024-02-29
  CHECK(r.rule.rebalances[1].names_after == 2);
  CHECK(r.baseline.rebalances[1].passed == 2);
}

TEST_CASE("backtest actions: a merger for stock and cash moves units to the acquirer") {
  FlatMarket m;
  m.act(ActionKind::merger, "BIRCH", "0.4", "1");
  const auto r = m.run();
  // 3,000 ALDER become 1,200 BIRCH and 3,000 cash: 2,700 x 20 + 3,000 + 30,000.
  CHECK(on(r.rule, "2024-02-12").value == dec("87000"));
  CHECK(on(r.rule, "2024-02-12").cash == dec("3000"));
  CHECK(on(r.rule, "2024-02-12").names == 2);
  CHECK(r.rule.rebalances.at(1).passed == 2);
}

TEST_CASE("backtest actions: an all-cash takeover pays cash per unit") {
  FlatMarket m;
  m.act(ActionKind::merger, "BIRCH", std::nullopt, "12");
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("96000"));
  CHECK(on(r.rule, "2024-02-12").names == 2);
}

TEST_CASE("backtest actions: a spin-off adds units of the new name and keeps the old") {
  FlatMarket m;
  m.act(ActionKind::spinoff, "OAKEN", "0.5", std::nullopt);
  const auto r = m.run();
  // 1,500 OAKEN at 5 on top of 90,000.
  CHECK(on(r.rule, "2024-02-12").value == dec("97500"));
  CHECK(on(r.rule, "2024-02-12").names == 4);
  // OAKEN is outside the rule's universe: it is sold on the next rebalancing day.
  CHECK(r.rule.rebalances.at(1).names_after == 3);
}

TEST_CASE("backtest actions: a return of capital pays cash and keeps the units") {
  FlatMarket m;
  m.act(ActionKind::return_of_capital, std::nullopt, std::nullopt, "1.5");
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("94500"));
  CHECK(on(r.rule, "2024-02-12").cash == dec("4500"));
  CHECK(on(r.rule, "2024-02-12").names == 3);
}

TEST_CASE("backtest actions: a stock dividend adds units of the same name") {
  FlatMarket m;
  m.act(ActionKind::stock_dividend, std::nullopt, "0.1", std::nullopt);
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("93000"));  // 3,300 x 10 + 60,000
}

TEST_CASE("backtest actions: a split recorded as an action multiplies the units") {
  FlatMarket m;
  m.act(ActionKind::split, std::nullopt, "2", std::nullopt);
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("120000"));  // 6,000 x 10 + 60,000
}

TEST_CASE("backtest actions: whole units pay the acquirer's fraction as cash in lieu") {
  FlatMarket m;
  m.act(ActionKind::merger, "BIRCH", "0.3333", std::nullopt, "6.5");
  const auto r = m.run(false);
  const auto& first = r.rule.rebalances.at(0).trades;
  const auto alder = std::find_if(first.begin(), first.end(), [&](const bt::Trade& t) {
    return t.security_id == m.id("ALDER");
  });
  REQUIRE(alder != first.end());
  REQUIRE(alder->quantity == dec("3000"));
  // 3,000 x 0.3333 = 999.9 BIRCH: 999 kept, 0.9 x 6.5 = 5.85 in cash.
  const auto& before = on(r.rule, "2024-02-09");
  const auto& after = on(r.rule, "2024-02-12");
  CHECK(after.cash - before.cash == dec("5.85"));
  CHECK(after.value - before.value == dec("-30000") + dec("19980") + dec("5.85"));
}

TEST_CASE("backtest actions: the frictionless pool keeps fractions, with no cash in lieu") {
  FlatMarket m;
  m.act(ActionKind::merger, "BIRCH", "0.3333", std::nullopt, "6.5");
  const auto r = m.run(true);
  CHECK(on(r.rule, "2024-02-12").value == dec("79998"));  // 999.9 x 20 + 60,000
  CHECK(on(r.rule, "2024-02-12").cash == dec("0"));
}

TEST_CASE("backtest actions: a voided action changes nothing") {
  FlatMarket m;
  const auto id = m.act(ActionKind::delisting, std::nullopt, std::nullopt, "4");
  CorporateAction v;
  v.security_id = m.id("ALDER");
  v.date = day("2024-02-12");
  v.kind = ActionKind::void_entry;
  v.voids_id = id;
  {
    keel::store::WriteTransaction tx(m.f.db);
    keel::store::insert_action(m.f.db, v);
    tx.commit();
  }
  const auto r = m.run();
  CHECK(on(r.rule, "2024-02-12").value == dec("90000"));
  CHECK(on(r.rule, "2024-02-12").names == 3);
}

namespace {

// The signal check's spread on 2024-01-31 over one month: ALDER (the lowest
// P/E, the cheapest fifth) against CEDAR (the dearest); flat closes give 0.
double january_spread(FlatMarket& m) {
  bt::SignalRequest req;
  req.from = day("2024-01-01");
  req.to = day("2024-03-29");
  req.horizons = {1};
  const auto res = bt::signal(m.f.db, keel::rules::parse_rule(kHoldAll, "hold.toml"), req);
  REQUIRE(!res.horizons.at(0).days.empty());
  REQUIRE(res.horizons[0].days[0].day == day("2024-01-31"));
  return res.horizons[0].days[0].spread;
}

}  // namespace

TEST_CASE("signal: a delisted name's forward return ends at the cash it paid") {
  FlatMarket m;
  CHECK(january_spread(m) == 0.0);
  m.act(ActionKind::delisting, std::nullopt, std::nullopt, "4");
  CHECK(january_spread(m) == doctest::Approx(4.0 / 10 - 1).epsilon(1e-15));
}

TEST_CASE("signal: a merged name's forward return ends at its cash and the acquirer's units") {
  FlatMarket m;
  m.act(ActionKind::merger, "BIRCH", "0.4", "1");
  // 1 + 0.4 x 20 = 9 against 10.
  CHECK(january_spread(m) == doctest::Approx(9.0 / 10 - 1).epsilon(1e-15));
}

TEST_CASE("signal: a spin-off's new units count in the parent's forward return") {
  FlatMarket m;
  m.act(ActionKind::spinoff, "OAKEN", "0.5", std::nullopt);
  // One ALDER (10) keeps its close and gains 0.5 OAKEN at 5: 12.5 against 10.
  CHECK(january_spread(m) == doctest::Approx(12.5 / 10 - 1).epsilon(1e-15));
}

TEST_CASE("signal: a return of capital counts as cash in the forward return") {
  FlatMarket m;
  m.act(ActionKind::return_of_capital, std::nullopt, std::nullopt, "1.5");
  // The close stays at 10 and 1.50 was paid: 11.5 against 10.
  CHECK(january_spread(m) == doctest::Approx(11.5 / 10 - 1).epsilon(1e-15));
}

TEST_CASE("signal: a stock dividend's new units count in the forward return") {
  FlatMarket m;
  m.act(ActionKind::stock_dividend, std::nullopt, "0.1", std::nullopt);
  // 1.1 units at 10 against one at 10.
  CHECK(january_spread(m) == doctest::Approx(11.0 / 10 - 1).epsilon(1e-15));
}
