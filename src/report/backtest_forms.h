// The forms of a back-test (backtest/backtest.h) and of a signal check
// (backtest/signal.h): terminal text, JSON and the curve as CSV.
//
// Contract
//  - Text: the figures of the rule, the baseline and the benchmark side by
//    side, the rolling windows, the notes and the cautions.
//  - JSON (core/json.h): money as exact decimal strings (simulated values
//    rounded to 10 places), returns and statistics as numbers, absent figures
//    as null; the curve holds every day of the run.
//  - backtest_curve_csv(): date,value,cash,names,baseline_value, one row for
//    the day before the start and each day with a close, values to 6 places.
#pragma once

#include <functional>
#include <string>

#include "backtest/backtest.h"
#include "backtest/signal.h"
#include "report/table.h"

namespace keel::report {

std::string backtest_text(const backtest::Result& r, const Style& style);
std::string backtest_json(const backtest::Result& r);
// The same JSON handed to `emit` in parts as it is written (a run's trades
// can be tens of MB).
using Emit = std::function<void(const std::string&)>;
void backtest_json(const backtest::Result& r, const Emit& emit);
std::string backtest_curve_csv(const backtest::Result& r);

std::string signal_text(const backtest::SignalResult& r, const Style& style);
std::string signal_json(const backtest::SignalResult& r);

// The notes (when there are any) and cautions that end a back-test's, a
// signal check's or a sweep's text.
std::string closing_notes(const std::vector<std::string>& notes,
                          const std::vector<std::string>& cautions);

}  // namespace keel::report
