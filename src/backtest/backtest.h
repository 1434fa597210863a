// Back-test: a rule run month by month over stored history, point in time,
// on a simulated pool, next to an equal-weight baseline of every eligible
// name. Methods and cautions: docs/backtest.md.
//
// Contract
//  - At each rebalancing day (history.h: rebalance_days, every
//    rule.rebalance_months) the rule engine (rules::screen, targets, and in
//    the normal mode rules::orders and apply) sees only figures with
//    known_on <= that day and closes on or before it. Orders fill at that
//    close with the rule's fee model. Between rebalances holdings are kept.
//  - A day on which the rule selects nothing (too few names pass, nothing
//    selected, weights that cannot add up) moves the pool to cash, with a
//    note naming the day and the reason.
//  - Splits multiply units at the start of their date. A distribution is
//    cash per unit held at the start of its ex-date: in the normal mode it
//    is owed from the ex-date (counted in the value) and becomes cash on the
//    first trading day on or after its pay date; in the frictionless mode it
//    is reinvested in the same security at the ex-date's close.
//  - Frictionless mode: no fees, bands, minimum trade, cash reserve or lot
//    rounding; the pool is fully invested in the targets' weights (scaled to
//    sum to one); all cash while nothing is selected. Its units and values
//    are binary doubles, which agree with the exact computation (units to 20
//    places, Request::exact_frictionless) to 1e-12 relative
//    (docs/methods.md). With the rule's frictions, fills, fees, cash, units
//    and distributions are exact decimals; the pool's value each day is
//    summed in doubles.
//  - The pool is valued at every day with any close in [from, to]; the value
//    on the day before `from` is the start value. Returns, volatility and
//    drawdown come from perf::measure on that series (no external flows).
//  - With a benchmark: its close on or before each day of the curve
//    (benchmark_curve), and the figures split by the state of the market
//    (down_markets): complete months and rolling windows in which the
//    benchmark fell or rose, up- and down-capture, and the rule's and the
//    baseline's return over the benchmark's three worst falls
//    (perf/relative.h).
//  - Throws InputError naming the option for from > to, a start value that
//    is not positive, no close in the period, an unknown or unpriced
//    benchmark, and a rolling window outside 1..600 months; rule problems are
//    located at the rule key.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "backtest/history.h"
#include "core/date.h"
#include "core/decimal.h"
#include "perf/performance.h"
#include "perf/relative.h"
#include "rules/engine.h"
#include "rules/rule.h"
#include "store/database.h"

namespace keel::backtest {

struct Request {
  Date from;
  Date to;
  Decimal start_value{100000};
  std::optional<std::string> benchmark;  // a security's symbol
  bool frictionless = false;
  // The frictionless pool in exact decimals (units to 20 places) instead of
  // doubles: slow; for checking that the doubles agree (backtest_test.cpp).
  bool exact_frictionless = false;
  bool keep_trades = true;  // false: no trades or shifts are kept (a report that shows none)
  int rolling_months = 12;
  bool baseline =
      true;  // false: no baseline run (a comparison runs one for all its rules; a sweep none)
  // Called after each rebalancing day: (done, total, day).
  std::function<void(std::size_t, std::size_t, Date)> progress;
};

struct CurvePoint {
  Date day;
  Decimal value;  // holdings at the day's closes, cash and distributions owed
  Decimal cash;
  int names = 0;  // securities held
};

// A fill with the rule's frictions, exactly.
struct Trade {
  std::int64_t security_id = 0;
  rules::Side side = rules::Side::buy;
  Decimal quantity;
  Decimal price;
  Decimal fee;
};

// A frictionless run's change of a holding, in doubles: `units` bought or
// sold at the close `price` (the double nearest the stored decimal, which
// `price_places` digits after the point give back exactly; -1 when they
// cannot).
struct Shift {
  std::int64_t security_id = 0;
  rules::Side side = rules::Side::buy;
  double units = 0;
  double price = 0;
  int price_places = -1;
};

struct RebalanceDay {
  Date day;
  std::size_t passed = 0;
  std::size_t selected = 0;
  int names_after = 0;
  Decimal value_before;
  Decimal traded;  // bought + sold, at the fills
  Decimal fees;
  std::vector<Trade> trades;                // with the rule's frictions
  std::vector<Shift> shifts;                // frictionless
  std::optional<std::string> no_selection;  // why the pool went to cash
};

struct StrategyRun {
  std::string label;
  std::vector<CurvePoint> curve;  // the day before `from`, then every day with a close
  std::vector<RebalanceDay> rebalances;
  perf::PerfResult perf;
  Decimal fees;
  Decimal distributions;
  double turnover_per_year = 0;  // sum of (bought + sold) / 2 / value, per 365.25 days
  int names_min = 0, names_max = 0;
  double names_mean = 0;  // over rebalancing days, after trading
};

struct RollingRow {
  std::string against;  // "benchmark SYMBOL" or "baseline"
  int months = 0;
  int windows = 0;
  int beat = 0;  // windows in which the rule's return was higher
  std::optional<double> median_excess, worst_excess, best_excess;  // rule - other
};

// A run's figures by the state of the market (the benchmark's).
struct RunInMarkets {
  std::string label;
  perf::MarketStates months;   // complete months
  perf::MarketStates windows;  // windows of DownMarkets::window_months from any complete month
  perf::Capture capture;       // over complete months
  std::vector<std::optional<double>> in_falls;  // the run's return over each of `falls`
};

struct DownMarkets {
  std::string benchmark;
  int window_months = 0;
  std::vector<perf::Drawdown> falls;  // the benchmark's worst, deepest first (at most 3)
  std::vector<RunInMarkets> runs;
};

// Monthly returns of a run's complete months (perf::measure's), nullopt for
// the others; and those of its benchmark.
std::vector<std::optional<double>> monthly_returns(const StrategyRun& run);
std::vector<std::optional<double>> benchmark_monthly_returns(const StrategyRun& run);

// `runs` share their days; `benchmark_curve` is the benchmark's level on
// each of those days.
DownMarkets down_markets(const std::vector<std::pair<std::string, const StrategyRun*>>& runs,
                         const std::vector<std::optional<Decimal>>& benchmark_curve,
                         const std::string& benchmark, int window_months);

struct Result {
  std::string rule_name;
  std::map<std::int64_t, std::string> symbols;  // of the securities the run read
  Date from, to;
  Decimal start_value;
  bool frictionless = false;
  std::vector<Date> rebalance_days;
  StrategyRun rule;
  StrategyRun baseline;  // empty when Request::baseline is false
  std::optional<std::string> benchmark;
  std::vector<std::optional<Decimal>> benchmark_curve;  // per day of rule.curve; empty without
  std::vector<RollingRow> rolling;
  std::optional<DownMarkets> down_markets;  // with a benchmark
  std::vector<std::string> notes;
  std::vector<std::string> cautions;
};

// The rule for the baseline: every name passing the screen (whatever its
// track record), equal weights, the same sleeves and trading settings.
rules::Rule baseline_rule(const rules::Rule& rule);

Result run(store::Database& db, const rules::Rule& rule, const Request& request);
// The same on preloaded history spanning [from - 1, to] (for tests and repeated runs).
Result run(const History& history, const rules::Rule& rule, const Request& request);

std::vector<std::string> backtest_cautions();

}  // namespace keel::backtest
