// The forms of a comparison of rules (backtest/compare.h): terminal text,
// JSON and the curves as CSV.
//
// Contract
//  - Text: the back-test figures of every rule, the baseline and the
//    benchmark side by side; the start-any-month table (each series'
//    compounded return over the holding period from the first and last
//    three start months, and its worst, median and best over all); each
//    rule against the benchmark, the baseline and the other rules; the down
//    markets (with a benchmark); notes and cautions.
//  - JSON (core/json.h, schema keel.compare): figures as numbers, money as
//    exact decimal strings (simulated values rounded to 10 places), absent
//    figures as null; no trades and no daily curve (--curve has it).
//  - compare_curve_csv(): date, one column per rule named for it, baseline,
//    benchmark; a row for the day before the start and each day with a close;
//    values to 6 places, the benchmark's close exactly as stored (empty
//    without one). RFC 4180, cells through the export formula guard.
#pragma once

#include <string>

#include "backtest/compare.h"
#include "report/table.h"

namespace keel::report {

std::string compare_text(const backtest::CompareResult& r, const Style& style);
// The start-any-month table as the text shows it: the first and last three
// start months (all of them when there are at most eight), then each
// series' worst, median and best; and a line counting those left out.
// With `every_start`, every start month.
std::string starts_table(const backtest::CompareResult& r, const Style& style, bool every_start);
// Each rule against the benchmark, the baseline and the other rules.
std::string pairings_text(const backtest::CompareResult& r, const Style& style);
std::string compare_json(const backtest::CompareResult& r);
std::string compare_curve_csv(const backtest::CompareResult& r);

}  // namespace keel::report
