// Back-test and signal check: no look-ahead, rebalancing days, Spearman's rho.
#include "backtest/backtest.h"

#include <doctest/doctest.h>
#include <fmt/format.h>

#include <algorithm>
#include <string>
#include <tuple>
#include <vector>

#include "backtest/compare.h"
#include "backtest/signal.h"
#include "ledger_fixture.h"
#include "rules/rule.h"

namespace {

using keel::Date;
using keel::Decimal;
using keel::testing::day;
namespace bt = keel::backtest;

constexpr const char* kRule = R"(
name = "Low P/E test"
[scope]
accounts = ["Sim"]
[screen]
metric = "pe"
min_names = 5
[select]
by = "z"
z_max = -0.3
[trading]
fee_fixed = 1
fee_bps = 5
)";

struct Market {
  keel::testing::LedgerFixture f;
  std::vector<std::string> symbols;

  Market() {
    for (int i = 0; i < 8; ++i) {
      symbols.push_back(fmt::format("S{}", i));
      f.security(symbols.back());
    }
    // Weekday closes from 2024-01-01 to 2024-04-30, each name on its own path.
    std::vector<std::tuple<std::string, std::string, std::string>> rows;
    int n = 0;
    for (Date d = day("2024-01-01"); d <= day("2024-04-30"); d = d.plus_days(1)) {
      const int wd = (d.days_since_epoch() + 4) % 7;  // 0 = Sunday
      if (wd == 0 || wd == 6) continue;
      ++n;
      for (int i = 0; i < 8; ++i)
        rows.emplace_back(symbols[i], d.str(),
                          fmt::format("{}.{:02d}", 20 + i * 3 + (n * (i + 1)) % 7, n % 100));
    }
    f.closes(rows);
    for (int i = 0; i < 8; ++i)
      metric(symbols[i], "2023-12-31", "2024-01-05", fmt::format("{}", 8 + i * 2 + (i % 3)));
  }
  void prices(const std::string& sym, const std::string& date, const std::string& close,
              bool replace = false) {
    f.closes({{sym, date, close}}, replace);
  }
  void metric(const std::string& sym, const std::string& date, const std::string& known,
              const std::string& value) {
    f.figures("pe", {{sym, date, known, value}});
  }
  static bt::Request request(bool frictionless = false) {
    bt::Request req;
    req.from = day("2024-01-01");
    req.to = day("2024-03-31");
    req.frictionless = frictionless;
    return req;
  }
  bt::Result run(bool frictionless = false) {
    return bt::run(f.db, keel::rules::parse_rule(kRule, "test.toml"), request(frictionless));
  }
};

// The test rule, and the same screen holding the three cheapest names.
std::vector<keel::rules::Rule> two_rules() {
  std::string three = kRule;
  auto swap = [&three](const std::string& from, const std::string& to) {
    three.replace(three.find(from), from.size(), to);
  };
  swap("by = \"z\"\nz_max = -0.3", "by = \"count\"\ncount = 3");
  swap("Low P/E test", "Three cheapest");
  return {keel::rules::parse_rule(kRule, "test.toml"),
          keel::rules::parse_rule(three, "three.toml")};
}

// The trades of the rule's i-th rebalancing day.
std::string trades_text(const bt::Result& res, std::size_t i) {
  const auto& r = res.rule.rebalances.at(i);
  std::string s = r.day.str() + ":";
  for (const auto& t : r.trades)
    s += fmt::format(" {} {} {} @{} fee {};", keel::rules::to_string(t.side), t.quantity.str(),
                     res.symbols.at(t.security_id), t.price.str(), t.fee.str());
  return s;
}

}  // namespace

TEST_CASE("backtest: a figure known after a rebalancing day does not change its orders") {
  Market m;
  const std::string before = trades_text(m.run(), 0);
  CHECK(before.find("buy") != std::string::npos);
  // S7 becomes the cheapest name, but only from 2024-02-01; and a restatement
  // of the old figure is known from 2024-02-15.
  m.metric("S7", "2024-01-31", "2024-02-01", "1");
  m.metric("S0", "2023-12-31", "2024-02-15", "99");
  const auto after = m.run();
  CHECK(after.rebalance_days.at(0) == day("2024-01-31"));
  CHECK(trades_text(after, 0) == before);
  // It does count from the next rebalancing day on.
  CHECK(trades_text(after, 1).find("buy") != std::string::npos);
  CHECK(trades_text(after, 1).find(" S7 @") != std::string::npos);
}

TEST_CASE("backtest: the same figure known on the rebalancing day does change its orders") {
  Market m;
  const std::string before = trades_text(m.run(), 0);
  m.metric("S7", "2024-01-31", "2024-01-31", "1");
  CHECK(trades_text(m.run(), 0) != before);
}

TEST_CASE("backtest: closes after a rebalancing day do not change its orders") {
  Market m;
  const auto first = m.run();
  const std::string before = trades_text(first, 0);
  for (const auto& s : m.symbols) {
    m.prices(s, "2024-02-01", "500", true);
    m.prices(s, "2024-03-15", "1.5", true);
  }
  const auto after = m.run();
  CHECK(trades_text(after, 0) == before);
  // The changed close does reach the value of its own day.
  auto value_on = [](const bt::Result& r, Date d) {
    for (const auto& p : r.rule.curve)
      if (p.day == d) return p.value;
    FAIL("no curve point on " << d.str());
    return Decimal();
  };
  CHECK(value_on(after, day("2024-02-01")) != value_on(first, day("2024-02-01")));
}

TEST_CASE("backtest: a close on the rebalancing day does change its orders") {
  Market m;
  const std::string before = trades_text(m.run(), 0);
  for (const auto& s : m.symbols) m.prices(s, "2024-01-31", "77", true);
  CHECK(trades_text(m.run(), 0) != before);
}

TEST_CASE("backtest: rebalancing days are each month's last day with a close") {
  const std::vector<Date> days{day("2024-01-30"), day("2024-01-31"), day("2024-02-28"),
                               day("2024-03-01"), day("2024-03-28"), day("2024-04-02")};
  CHECK(bt::rebalance_days(days, std::nullopt, day("2024-01-01"), day("2024-03-31"), 1) ==
        std::vector<Date>{day("2024-01-31"), day("2024-02-28"), day("2024-03-28")});
  CHECK(bt::rebalance_days(days, std::nullopt, day("2024-01-01"), day("2024-04-30"), 2) ==
        std::vector<Date>{day("2024-01-31"), day("2024-03-28")});
  // The day after the last one given decides whether that one ends its month.
  CHECK(
      bt::rebalance_days(days, day("2024-04-03"), day("2024-04-01"), day("2024-04-30"), 1).empty());
  CHECK(bt::rebalance_days(days, day("2024-05-01"), day("2024-04-01"), day("2024-04-30"), 1) ==
        std::vector<Date>{day("2024-04-02")});
}

TEST_CASE("backtest: the frictionless pool is fully invested at equal weight") {
  Market m;
  const auto r = m.run(true);
  const auto& first = r.rule.rebalances.at(0);
  REQUIRE(first.selected > 0);
  CHECK(first.fees.is_zero());
  const auto& point = r.rule.curve.at(static_cast<std::size_t>(
      std::find_if(r.rule.curve.begin(), r.rule.curve.end(),
                   [&](const bt::CurvePoint& p) { return p.day == first.day; }) -
      r.rule.curve.begin()));
  CHECK(point.cash.abs() < Decimal::parse("0.000000001"));
  CHECK(point.names == static_cast<int>(first.selected));
}

TEST_CASE("backtest: the report always carries the cautions") {
  Market m;
  const auto r = m.run();
  REQUIRE(r.cautions.size() == 3);
  CHECK(r.cautions[0].rfind("Back-tests flatter", 0) == 0);
  CHECK(r.cautions[2].rfind("Past results do not predict", 0) == 0);
}

TEST_CASE(
    "backtest: a universe in two currencies is refused while the ledger has no currency, "
    "and converted once it has one") {
  Market m;
  keel::Security s;
  s.symbol = "EURO";
  s.name = "Euro stock (invented)";
  s.currency = "EUR";
  keel::store::insert_security(m.f.db, s);
  CHECK_THROWS_WITH_AS(
      m.run(),
      "test.toml:3: key 'scope': the universe holds stocks priced in EUR, USD; keel "
      "does not convert between currencies yet: narrow it to one with "
      "scope.sector or scope.symbols",
      keel::InputError);
  // With the ledger's currency recorded, the other one's stocks stay in the
  // universe, valued in USD at each day's rate (none here: never priced).
  keel::store::set_ledger_currency(m.f.db, "USD");
  const auto r = m.run();
  CHECK(std::none_of(r.notes.begin(), r.notes.end(),
                     [](const std::string& n) { return n.find("left out") != std::string::npos; }));
  CHECK(r.symbols.count(keel::store::security_with_symbol(m.f.db, "EURO").id) == 1);
}

// Expected values: scipy.stats.spearmanr 1.10.1 (Debian 12 python3-scipy).
TEST_CASE("signal: Spearman's rho matches scipy without ties") {
  const std::vector<double> x{1, 2, 3, 4, 5}, y{5, 6, 7, 8, 7};
  CHECK(*bt::spearman(x, y) == doctest::Approx(0.8207826816681233).epsilon(1e-14));
}

TEST_CASE("signal: Spearman's rho matches scipy with ties on both sides") {
  const std::vector<double> x{3.1, 1.2, 1.2, 4.0, 2.5, 2.5, 0.3};
  const std::vector<double> y{0.05, -0.02, 0.01, 0.04, 0.0, -0.01, -0.03};
  CHECK(*bt::spearman(x, y) == doctest::Approx(0.8001322641986389).epsilon(1e-14));
}

TEST_CASE("signal: Spearman's rho is undefined when one side has no spread") {
  const std::vector<double> x{1, 2, 3}, y{4, 4, 4};
  CHECK_FALSE(bt::spearman(x, y).has_value());
}

TEST_CASE("signal: seven names fall into quintiles of 2, 1, 2, 1 and 1 by z order") {
  // floor(5 i / 7) for i = 0..6: 0 0 1 2 2 3 4 (hand computation).
  const std::vector<double> r{0.10, 0.20, 0.30, 0.40, 0.60, 0.70, 0.80};
  const auto q = bt::quintile_means(r);
  CHECK(*q[0] == doctest::Approx(0.15).epsilon(1e-15));
  CHECK(*q[1] == doctest::Approx(0.30).epsilon(1e-15));
  CHECK(*q[2] == doctest::Approx(0.50).epsilon(1e-15));
  CHECK(*q[3] == doctest::Approx(0.70).epsilon(1e-15));
  CHECK(*q[4] == doctest::Approx(0.80).epsilon(1e-15));
}

TEST_CASE("signal: fewer than five names leave quintiles empty") {
  const std::vector<double> r{0.10, 0.20};
  const auto q = bt::quintile_means(r);
  CHECK(*q[0] == doctest::Approx(0.10).epsilon(1e-15));
  CHECK_FALSE(q[1].has_value());
  CHECK(*q[2] == doctest::Approx(0.20).epsilon(1e-15));
  CHECK_FALSE(q[3].has_value());
  CHECK_FALSE(q[4].has_value());
}

// The frictionless pool counts in doubles; the same run in exact decimals
// (units to 20 places) is the reference. Over a year of monthly rebalancing
// with a split and reinvested distributions, every value agrees to 1e-12.
TEST_CASE("backtest: frictionless doubles agree with the exact computation to 1e-12") {
  keel::testing::LedgerFixture f;
  std::vector<std::tuple<std::string, std::string, std::string>> closes;
  std::vector<std::tuple<std::string, std::string, std::string, std::string>> figures;
  for (int i = 0; i < 12; ++i) f.security(fmt::format("N{:02d}", i));
  int n = 0;
  for (Date d = day("2023-01-02"); d <= day("2023-12-29"); d = d.plus_days(1)) {
    const int wd = (d.days_since_epoch() + 4) % 7;  // 0 = Sunday
    if (wd == 0 || wd == 6) continue;
    ++n;
    for (int i = 0; i < 12; ++i)
      closes.emplace_back(fmt::format("N{:02d}", i), d.str(),
                          fmt::format("{}.{:02d}", 15 + i + (n * (i + 3)) % 11, (n * 7 + i) % 100));
    if (d.day() == 2 || (d.day() == 3 && wd == 1))
      for (int i = 0; i < 12; ++i)
        figures.emplace_back(fmt::format("N{:02d}", i), d.str(), d.str(),
                             fmt::format("{}.{}", 5 + (i * 7 + n) % 13, i));
  }
  f.closes(closes);
  f.figures("pe", figures);
  f.split_of("N03", "2023-06-10", "3");
  for (int i = 0; i < 12; i += 2)
    f.distribution(fmt::format("N{:02d}", i), "2023-05-13", "2023-05-20", "0.37");
  bt::Request req;
  req.from = day("2023-01-03");
  req.to = day("2023-12-29");
  req.frictionless = true;
  const auto rule = keel::rules::parse_rule(kRule, "test.toml");
  const auto binary = bt::run(f.db, rule, req);
  req.exact_frictionless = true;
  const auto exact = bt::run(f.db, rule, req);
  REQUIRE(binary.rule.curve.size() == exact.rule.curve.size());
  REQUIRE(exact.rule.rebalances.size() >= 11);
  CHECK(exact.rule.distributions.is_positive());
  double worst = 0;
  for (const auto* runs : {&binary.rule, &binary.baseline}) {
    const auto& other = runs == &binary.rule ? exact.rule : exact.baseline;
    for (std::size_t i = 0; i < runs->curve.size(); ++i) {
      const double a = runs->curve[i].value.to_double(), b = other.curve[i].value.to_double();
      worst = std::max(worst, std::abs(a - b) / b);
    }
  }
  MESSAGE("largest relative difference of a day's value: " << worst);
  CHECK(worst <= 1e-12);
  CHECK(binary.rule.perf.twr.period == doctest::Approx(exact.rule.perf.twr.period).epsilon(1e-12));
}

TEST_CASE("signal: a day on which the rule selects nothing still counts") {
  Market m;
  std::string text = kRule;
  text.replace(text.find("z_max = -0.3"), 12, "z_max = -9.0");
  bt::SignalRequest req;
  req.from = day("2024-01-01");
  req.to = day("2024-04-30");
  req.horizons = {1};
  const auto r = bt::signal(m.f.db, keel::rules::parse_rule(text, "test.toml"), req);
  // Month-ends of January to March have a month-end a month later.
  CHECK(r.horizons.at(0).days.size() == 3);
  CHECK(r.notes.empty());
}

TEST_CASE("signal: by name gives each name's track record per horizon and the rule's") {
  Market m;
  const std::string text = std::string(kRule) +
                           "[track_record]\nwindow_months = 6\nhorizon_months = 2\n"
                           "min_observations = 3\n";
  bt::SignalRequest req;
  req.from = day("2024-01-01");
  req.to = day("2024-04-30");
  req.horizons = {1};
  req.by_name = true;
  const auto r = bt::signal(m.f.db, keel::rules::parse_rule(text, "test.toml"), req);
  CHECK(r.by_name_horizons == std::vector<int>{1, 2});
  REQUIRE(r.by_name.size() == 8);
  CHECK(r.by_name.front().symbol == "S0");
  CHECK(r.by_name.back().symbol == "S7");
  // The check's four months: January to March end a month later inside
  // them, January and February two months later.
  for (const auto& n : r.by_name) {
    CHECK(n.records.at(0).observations == 3);
    CHECK(n.records.at(1).observations == 2);
  }
}

TEST_CASE("compare: each rule's figures are those of its own back-test") {
  Market m;
  const auto rules = two_rules();
  auto req = Market::request();
  req.rolling_months = 2;
  const auto c = bt::compare(m.f.db, rules, req);
  REQUIRE(c.runs.size() == 2);
  for (std::size_t i = 0; i < 2; ++i) {
    const auto alone = bt::run(m.f.db, rules[i], req);
    CHECK(c.runs[i].rule.perf.closing_value == alone.rule.perf.closing_value);
    CHECK(c.runs[i].rule.perf.twr.period == alone.rule.perf.twr.period);
    CHECK(c.runs[i].rule.fees == alone.rule.fees);
  }
  CHECK(c.labels == std::vector<std::string>{"Low P/E test", "Three cheapest"});
  CHECK(c.runs[0].rule.rebalances.size() == 3);
  CHECK(c.runs[1].rule.rebalances.front().names_after == 3);
}

TEST_CASE("compare: the baseline is the first rule's and runs once") {
  Market m;
  const auto rules = two_rules();
  auto req = Market::request();
  req.rolling_months = 2;
  const auto c = bt::compare(m.f.db, rules, req);
  const auto alone = bt::run(m.f.db, rules[0], req);
  CHECK(c.runs[0].baseline.perf.closing_value == alone.baseline.perf.closing_value);
  CHECK(c.runs[1].baseline.curve.empty());
}

TEST_CASE("compare: start months hold every series' return over the holding period") {
  Market m;
  auto req = Market::request();
  req.rolling_months = 2;
  const auto c = bt::compare(m.f.db, two_rules(), req);
  // January to March are complete: starts in January and February.
  CHECK(c.starts == std::vector<Date>{day("2024-01-01"), day("2024-02-01")});
  REQUIRE(c.series == std::vector<std::string>{"Low P/E test", "Three cheapest", "baseline"});
  const auto& months = c.runs[1].rule.perf.months;
  CHECK(c.returns[1][1] ==
        doctest::Approx((1 + months[1].twr) * (1 + months[2].twr) - 1).epsilon(1e-12));
  // Each rule against the baseline and the other rule.
  REQUIRE(c.pairings.size() == 4);
  CHECK(c.pairings[0].series == 0);
  CHECK(c.pairings[0].against == 2);
  CHECK(c.pairings[1].against == 1);
  CHECK(c.pairings[1].excess.periods == 2);
}

TEST_CASE("compare: fewer than two rules are refused naming RULES") {
  Market m;
  CHECK_THROWS_WITH_AS(bt::compare(m.f.db, {two_rules().front()}, Market::request()),
                       "RULES: a comparison needs two rule files or more (one rule alone: keel "
                       "backtest)",
                       keel::InputError);
}

TEST_CASE("compare: a holding period longer than the complete months is refused") {
  Market m;
  auto req = Market::request();
  req.rolling_months = 4;
  CHECK_THROWS_WITH_AS(bt::compare(m.f.db, two_rules(), req),
                       "--hold-months: 4 months is longer than the 3 complete months from "
                       "2024-01-01 to 2024-03-31",
                       keel::InputError);
}

TEST_CASE("compare: the cautions warn about trying many rules, then those of a back-test") {
  Market m;
  auto req = Market::request();
  req.rolling_months = 1;
  const auto c = bt::compare(m.f.db, two_rules(), req);
  REQUIRE(c.cautions.size() == 4);
  CHECK(c.cautions[0].rfind("Comparing rules is itself a search", 0) == 0);
  CHECK(std::equal(c.cautions.begin() + 1, c.cautions.end(), bt::backtest_cautions().begin()));
}

TEST_CASE("compare: rules of the same name are told apart by their files") {
  Market m;
  auto rules = two_rules();
  rules[1].name = rules[0].name;
  auto req = Market::request();
  req.rolling_months = 1;
  const auto c = bt::compare(m.f.db, rules, req);
  CHECK(c.labels ==
        std::vector<std::string>{"Low P/E test (test.toml)", "Low P/E test (three.toml)"});
}
