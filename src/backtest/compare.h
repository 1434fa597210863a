// Comparison of rules: several back-tests over the same period, market data
// and start value, from one load of the market data, side by side with the
// equal-weight baseline and the benchmark. Methods: docs/compare.md.
//
// Contract
//  - Each rule runs as `keel backtest` runs it (backtest.h: the same pool,
//    rebalancing days of its own, figures), with Request::rolling_months as
//    the holding period H. The baseline is that of the first rule (every
//    name passing its screen, equal weight, its sleeves and trading).
//  - Start-any-month: for every start at a complete month whose H months are
//    all complete, each series' compounded return over H months; and for
//    each rule, against the benchmark, the baseline and every other rule,
//    perf::compare_returns() of those returns.
//  - With a benchmark: the figures by the state of the market for every rule
//    and the baseline (backtest.h: down_markets), over H-month windows.
//  - The cautions are the back-test's, after one about trying many rules.
//  - Throws InputError naming RULES for fewer than two rules or for rules in
//    different currencies, and naming --hold-months for H outside 1..600 or
//    longer than the complete months of the period; else as backtest::run.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "backtest/backtest.h"
#include "backtest/history.h"
#include "perf/relative.h"
#include "rules/rule.h"
#include "store/database.h"

namespace keel::backtest {

struct Pairing {
  std::size_t series = 0;   // index into CompareResult::series (a rule)
  std::size_t against = 0;  // index into CompareResult::series
  perf::ExcessSummary excess;
};

struct CompareResult {
  Date from, to;
  Decimal start_value;
  bool frictionless = false;
  std::optional<std::string> benchmark;
  int hold_months = 0;
  std::vector<std::string> labels;  // per rule: its name, with its file when names repeat
  std::vector<Result> runs;         // per rule; runs.front().baseline is the baseline
  // Start-any-month: the series are the rules, the baseline and the benchmark
  // (when there is one), in that order; returns[series][start].
  std::vector<std::string> series;
  std::vector<Date> starts;  // the first day of each start month
  std::vector<std::vector<double>> returns;
  std::vector<Pairing> pairings;
  std::optional<DownMarkets> down_markets;
  std::vector<std::string> notes;
  std::vector<std::string> cautions;
};

// The refusals that need no data: fewer than two rules, a holding period
// outside 1..600 or longer than the period's complete months.
void check_compare_request(std::size_t rules, const Request& request);

CompareResult compare(store::Database& db, const std::vector<rules::Rule>& rules,
                      const Request& request);
CompareResult compare(const History& history, const std::vector<rules::Rule>& rules,
                      const Request& request);

}  // namespace keel::backtest
