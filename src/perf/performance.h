// Performance of a portfolio over a period, from its daily value and external
// flows. Methods, conventions and sources: docs/methods-returns.md.
//
// Contract
//  - Input: the value at close (after the day's transactions) and the day's
//    external inflow and outflow (positive amounts), only for days on which
//    something changed. A day without an entry keeps the previous value and
//    has no flows. The opening value is the latest entry on or before the day
//    before `from`; entries earlier than that and after `to` are ignored.
//  - The period is the whole days from..to inclusive (days = to - from + 1).
//  - All returns are fractions (0.05 = 5 %). Annualized figures exist only for
//    periods of at least 365 days. Money stays Decimal; ratios are double.
//  - A figure that is undefined for the data is std::nullopt (or a status for
//    the money-weighted return), never a substitute number.
//  - measure() throws keel::InputError, naming the day, when: from > to; the
//    series days are not strictly increasing; a value, inflow or outflow is
//    negative; there is no entry on or before the day before `from`;
//    benchmark days are not strictly increasing, a level is not positive, or
//    there is no level on or before the day before `from`; the risk-free rate
//    is -1 or less.
#pragma once

#include <optional>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "perf/mwr.h"
#include "perf/stats.h"

namespace keel::perf {

struct DayPoint {
  Date day;
  Decimal value;    // V_t at close, after the day's transactions
  Decimal inflow;   // I_t, external money in (counted at the start of the day)
  Decimal outflow;  // O_t, external money out (counted at the end of the day)
};

struct LevelPoint {
  Date day;
  Decimal level;  // benchmark level; the latest one on or before a day applies
};

struct PerfInput {
  Date from;
  Date to;
  std::vector<DayPoint> series;
  std::optional<std::vector<LevelPoint>> benchmark;
  std::optional<Decimal> risk_free_annual;  // e.g. 0.02 for 2 % a year
};

struct ReturnFigure {
  double period = 0;
  std::optional<double> annualized;  // only when days >= 365
};

struct MonthRow {
  int year = 0;
  int month = 0;
  Date first;             // first day of the month inside the period
  Date last;              // last day of the month inside the period
  bool complete = false;  // the whole calendar month lies in the period
  Decimal opening_value;  // at close of first - 1
  Decimal closing_value;  // at close of last
  Decimal inflow;
  Decimal outflow;
  double twr = 0;
  std::optional<double> modified_dietz;  // nullopt when its denominator is not positive
  std::optional<double> benchmark;
};

struct DailyReturn {
  Date day;
  double r;  // (V_t + O_t) / (V_{t-1} + I_t) - 1
};

struct BenchmarkFigures {
  ReturnFigure benchmark;
  double excess_arithmetic = 0;  // R - B over the period (true TWR)
  double excess_geometric = 0;   // (1+R)/(1+B) - 1
  std::optional<double> excess_arithmetic_annualized;
  std::optional<double> excess_geometric_annualized;
  std::optional<double> tracking_error;  // sample sd of complete months' R_m - B_m, x sqrt(12)
};

struct RiskFigures {
  std::optional<double> daily_volatility;  // sample sd of daily returns x sqrt(252)
  int daily_observations = 0;
  std::optional<double> monthly_volatility;  // sample sd of complete months' TWR x sqrt(12)
  int monthly_observations = 0;
  std::optional<Drawdown> max_drawdown;  // of the true TWR index
  std::optional<double> sharpe;          // (annualized TWR - rf) / monthly_volatility
};

struct PerfResult {
  Date from;
  Date to;
  int days = 0;
  Decimal opening_value;
  Decimal closing_value;
  Decimal inflow;
  Decimal outflow;
  ReturnFigure twr;                            // true time-weighted, daily linked
  std::optional<ReturnFigure> modified_dietz;  // monthly Modified Dietz, linked
  MwrSolution mwr;                             // see perf/mwr.h
  std::optional<ReturnFigure> mwr_figure;      // period rate and (>= 365 days) annual rate
  std::optional<BenchmarkFigures> benchmark;
  RiskFigures risk;
  std::vector<MonthRow> months;
  std::vector<DailyReturn> daily;  // one per entry day in the period with a positive base
};

PerfResult measure(const PerfInput& input);

}  // namespace keel::perf
