// Sweep: one rule back-tested over a grid of settings of its keys, every
// variant on ONE load of the market data, with the overfitting checks of
// perf/overfit.h and an optional walk-forward test. Methods:
// docs/methods-overfit.md; the command: docs/sweep.md.
//
// Contract
//  - The grid is the product of the axes, the first axis varying slowest;
//    each variant is rules::with_setting of the rule for each axis (option
//    "--vary"), so a key or value is refused as the rule file's would be.
//    Keys that change the data loaded (scope.*, screen.metric) are refused,
//    as are an empty axis, a key given twice and a value listed twice. More
//    than `max_variants` variants is refused naming --max-variants. All
//    variants are built and checked before any data is read.
//  - Each variant is a back-test (backtest::run, no baseline, no trades
//    kept) on the same History over [from, to]. Its monthly returns are
//    perf::measure's month rows (the first and last may be part months);
//    its Sharpe ratio is perf::sharpe_ratio of them (per month).
//  - The best variant has the highest Sharpe ratio (the first on ties;
//    undefined below every defined one). The deflated Sharpe ratio is that
//    variant's against every defined Sharpe ratio; the PBO uses the T x N
//    matrix of monthly returns with perf::pbo_blocks(T) blocks. Each is unset,
//    with a note saying why, when it cannot be computed.
//  - Walk-forward IN:OUT: months are the calendar months of [from, to];
//    window k takes months [k OUT, k OUT + IN) in sample and the next OUT
//    (or fewer at the end) out of sample. The variant with the highest
//    Sharpe ratio of its in-sample months (from the full-period runs; first
//    on ties) is run alone over the out-of-sample months, starting in cash
//    with the value the previous window ended with (the first with the start
//    value). Throws InputError naming --walk-forward for IN < 2 (a Sharpe
//    ratio needs two months), OUT < 1, or IN >= the period's months.
//  - Throws InputError naming the option for from > to, a start value that
//    is not positive, and no close in the period (backtest::run).
#pragma once

#include <cstddef>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "backtest/history.h"
#include "core/date.h"
#include "core/decimal.h"
#include "perf/overfit.h"
#include "rules/rule.h"
#include "store/database.h"

namespace keel::backtest {

struct Axis {
  std::string key;
  std::vector<std::string> values;  // as written, each a TOML value or a bare word
};

// "KEY=V1,V2,..." as given to --vary; commas inside [...] or quotes belong to
// the value. Throws InputError naming --vary when it is not of that shape.
Axis parse_axis(std::string_view text);

struct SweepRequest {
  Date from;
  Date to;
  Decimal start_value{100000};
  bool frictionless = false;
  std::vector<Axis> axes;
  std::size_t max_variants = 200;
  struct WalkForward {
    int in_months = 0;
    int out_months = 0;
  };
  std::optional<WalkForward> walk_forward;
  // Called after each variant's run: (done, total).
  std::function<void(std::size_t, std::size_t)> progress;
};

struct VariantRun {
  std::vector<std::string> values;  // one per axis, as written
  std::vector<double> monthly;      // one per month of SweepResult::months
  std::optional<double> sharpe;     // per month
  double twr = 0;
  std::optional<double> twr_annualized;
  std::optional<double> volatility;    // monthly, annualized (perf::RiskFigures)
  std::optional<double> max_drawdown;  // depth, <= 0
  double turnover_per_year = 0;
  Decimal end_value;
  int cash_days = 0;  // rebalancing days on which nothing was selected
};

struct WalkWindow {
  Date in_from, in_to, out_from, out_to;
  std::size_t chosen = 0;  // index into variants
  std::optional<double> in_sharpe;
  Decimal out_start, out_end;
  double out_return = 0;
};

struct WalkForwardResult {
  int in_months = 0, out_months = 0;
  std::vector<WalkWindow> windows;
  Date out_from, out_to;
  std::vector<double> monthly;  // the stitched out-of-sample months
  double twr = 0;               // stitched
  std::optional<double> sharpe;
  // The full-period best variant over the same out-of-sample months.
  std::optional<double> best_twr;  // unset when no variant has a Sharpe ratio
  std::optional<double> best_sharpe;
};

struct SweepResult {
  std::string rule_name;
  Date from, to;
  Decimal start_value;
  bool frictionless = false;
  std::vector<std::string> keys;    // the axes' keys
  std::vector<std::string> months;  // "YYYY-MM"
  std::vector<VariantRun> variants;
  std::optional<std::size_t> best;
  std::optional<perf::DeflatedSharpe> deflated;
  std::optional<perf::Pbo> pbo;
  std::optional<WalkForwardResult> walk_forward;
  std::vector<std::string> notes;
  std::vector<std::string> cautions;
};

// The variants' rules, checked, in grid order (no data read).
std::vector<rules::Rule> sweep_variants(const rules::Rule& rule, const SweepRequest& request);

SweepResult sweep(store::Database& db, const rules::Rule& rule, const SweepRequest& request);
SweepResult sweep(const History& history, const rules::Rule& rule, const SweepRequest& request);

std::vector<std::string> sweep_cautions();

// In sample against out of sample without choosing anything: each variant's
// Sharpe ratio (perf::sharpe_ratio, per month) over the first half of the
// months (the first floor(T / 2)) and over the rest, in variant order; unset
// where it is undefined.
struct HalfSharpes {
  std::optional<double> first, second;
};
std::vector<HalfSharpes> half_sharpes(const SweepResult& r);

}  // namespace keel::backtest
