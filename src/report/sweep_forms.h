// The forms of a sweep (backtest/sweep.h): terminal text and JSON.
//
// Contract
//  - Text: how many variants were tried and over how many months, a table of
//    every variant's figures (the best marked), the deflated Sharpe ratio of
//    the best and the PBO in words, the walk-forward windows and the stitched
//    out-of-sample result beside the best variant over the same months, then
//    notes and cautions. Sharpe ratios are shown per month and annualized
//    (x sqrt(12)).
//  - JSON (core/json.h), schema keel.sweep version 1 (docs/schema/sweep.json):
//    money as exact decimal strings (simulated values rounded to 10 places),
//    returns and statistics as numbers, absent figures as null.
#pragma once

#include <string>

#include "backtest/sweep.h"
#include "report/table.h"

namespace keel::report {

std::string sweep_text(const backtest::SweepResult& r, const Style& style);
// The same without its closing notes and cautions.
std::string sweep_figures_text(const backtest::SweepResult& r, const Style& style);
std::string sweep_json(const backtest::SweepResult& r);

}  // namespace keel::report
