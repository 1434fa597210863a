// The forms of a back-test (backtest/backtest.h) and of a signal check
// (backtest/signal.h): terminal text, JSON and the curve as CSV.
//
// Contract
//  - Text: the figures of the rule, the baseline and the benchmark side by
//    side, the rolling windows, the notes and the cautions.
//  - JSON (core/json.h): money as exact decimal strings (simulated values
//    rounded to 10 places), returns and statistics as numbers, absent figures
//    as null; the curve holds every day of the run.
//  - backtest_curve_csv(): date,value,cash,names,baseline_value,benchmark, one
//    row for the day before the start and each day with a close, values to 6
//    places; the benchmark's close on or before the day exactly as stored
//    (empty without a benchmark).
//  - figures_table(), down_markets_text(), down_markets_json(): the parts a
//    back-test and a comparison of rules share.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "backtest/backtest.h"
#include "backtest/signal.h"
#include "core/json.h"
#include "report/table.h"

namespace keel::report {

std::string backtest_text(const backtest::Result& r, const Style& style);
std::string backtest_json(const backtest::Result& r);
// The text report's lines on the rolling windows ("Held N months from the
// start of any complete month: ..."), empty without windows.
std::string rolling_text(const backtest::Result& r);
// The same JSON handed to `emit` in parts as it is written (a run's trades
// can be tens of MB).
using Emit = std::function<void(const std::string&)>;
void backtest_json(const backtest::Result& r, const Emit& emit);
std::string backtest_curve_csv(const backtest::Result& r);
// A curve file's benchmark cell for day i: the close exactly, or empty.
std::string benchmark_cell(const std::vector<std::optional<Decimal>>& curve, std::size_t i);

// The figures of each run side by side, with the benchmark's returns (of the
// first run's perf) when there is one.
std::string figures_table(
    const std::vector<std::pair<std::string, const backtest::StrategyRun*>>& runs,
    const std::optional<std::string>& benchmark, const Style& style);
// A run's figures as members of an open JSON object (end value, returns,
// risk, excess with a benchmark, turnover, fees, distributions, names).
void run_figures_json(JsonWriter& j, const backtest::StrategyRun& s);
std::string down_markets_text(const backtest::DownMarkets& d, const Style& style);
void down_markets_json(JsonWriter& j, const std::optional<backtest::DownMarkets>& d);
// The closing notes (when there are any) and cautions of a report.
std::string notes_and_cautions(const std::vector<std::string>& notes,
                               const std::vector<std::string>& cautions);

std::string signal_text(const backtest::SignalResult& r, const Style& style);
// The same without its closing notes and cautions.
std::string signal_figures_text(const backtest::SignalResult& r, const Style& style);
std::string signal_json(const backtest::SignalResult& r);

// The notes (when there are any) and cautions that end a back-test's, a
// signal check's or a sweep's text.
std::string closing_notes(const std::vector<std::string>& notes,
                          const std::vector<std::string>& cautions);

}  // namespace keel::report
