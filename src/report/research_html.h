// Research pages: a back-test, a comparison of rules, a signal check and a
// sweep as one self-contained HTML page each, charts drawn by
// report/svg_chart.h in keel's palette (docs/research-reports.md).
//
// Contract
//  - One file: inline CSS and inline SVG, no scripts, no links out, no
//    external resources. Every piece of user text (rule names, labels,
//    notes) is escaped. A print stylesheet keeps each chart whole on a page.
//  - The figures tables are the text report's own (report/backtest_forms.h,
//    compare_forms.h, sweep_forms.h), rendered without colour at full width
//    as preformatted text, so the page and the terminal cannot disagree.
//  - Every page ends with the report's notes and its cautions (not advice;
//    past results do not predict; back-tests overfit), and says so at the top.
//  - Back-test: value of the rule, the baseline and the benchmark (rebased
//    to the start value) on a log scale; drawdown below each one's running
//    peak; rolling excess over the benchmark (else the baseline) for the
//    request's rolling months, by window end; the rule's complete months as
//    a year x month grid; names held and turnover (bought + sold over value
//    before trading) on each rebalancing day.
//  - Comparison: every rule's and the baseline's value and the benchmark's
//    (log scale); the start-any-month excess of the first rule over the
//    benchmark (else the baseline) as a histogram; each series' return from
//    each start month; the down-market split as bars.
//  - Signal check: the mean IC per horizon with +/- 2 standard errors
//    (sd / sqrt(days)); each score quintile's mean forward return per
//    horizon.
//  - Sweep: each variant's Sharpe ratio in the first half of the months
//    against the second half (backtest::half_sharpes), the number of
//    variants tried, the deflated Sharpe ratio and PBO as the text states
//    them, and the walk-forward windows when run.
//  - Pure functions of their results; nothing here throws but
//    std::bad_alloc.
#pragma once

#include <string>

#include "backtest/backtest.h"
#include "backtest/compare.h"
#include "backtest/signal.h"
#include "backtest/sweep.h"

namespace keel::report {

std::string backtest_html(const backtest::Result& r);
std::string compare_html(const backtest::CompareResult& r);
std::string signal_html(const backtest::SignalResult& r);
std::string sweep_html(const backtest::SweepResult& r);

}  // namespace keel::report
