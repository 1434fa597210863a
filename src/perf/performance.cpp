#include "perf/performance.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "core/error.h"

namespace keel::perf {
namespace {

void check_series(const PerfInput& in) {
  if (in.to < in.from)
    throw InputError(fmt::format("performance: the period ends ({}) before it starts ({})",
                                 in.to.str(), in.from.str()));
  const Date before = in.from.plus_days(-1);
  for (std::size_t i = 0; i < in.series.size(); ++i) {
    const DayPoint& p = in.series[i];
    if (i > 0 && !(in.series[i - 1].day < p.day))
      throw InputError(fmt::format("performance: series day {} does not come after {}", p.day.str(),
                                   in.series[i - 1].day.str()));
    if (p.value.is_negative())
      throw InputError(
          fmt::format("performance: value on {} is negative ({})", p.day.str(), p.value.str()));
    if (p.inflow.is_negative())
      throw InputError(
          fmt::format("performance: inflow on {} is negative ({}); give money in "
                      "as a positive inflow",
                      p.day.str(), p.inflow.str()));
    if (p.outflow.is_negative())
      throw InputError(
          fmt::format("performance: outflow on {} is negative ({}); give money out "
                      "as a positive outflow",
                      p.day.str(), p.outflow.str()));
  }
  if (in.series.empty() || in.series.front().day > before)
    throw InputError(fmt::format(
        "performance: no value on or before {}, the day before the period starts", before.str()));
  if (in.benchmark) {
    const auto& levels = *in.benchmark;
    for (std::size_t i = 0; i < levels.size(); ++i) {
      if (i > 0 && !(levels[i - 1].day < levels[i].day))
        throw InputError(fmt::format("benchmark: day {} does not come after {}",
                                     levels[i].day.str(), levels[i - 1].day.str()));
      if (!levels[i].level.is_positive())
        throw InputError(fmt::format("benchmark: level on {} is not positive ({})",
                                     levels[i].day.str(), levels[i].level.str()));
    }
    if (levels.empty() || levels.front().day > before)
      throw InputError(fmt::format(
          "benchmark: no level on or before {}, the day before the period starts", before.str()));
  }
  if (in.risk_free_annual && *in.risk_free_annual <= Decimal(-1))
    throw InputError(fmt::format("performance: risk-free rate {} is -100 % or less",
                                 in.risk_free_annual->str()));
}

// Latest level on or before `day`; the caller has checked that one exists.
double level_at(const std::vector<LevelPoint>& levels, Date day) {
  auto it = std::upper_bound(levels.begin(), levels.end(), day,
                             [](Date d, const LevelPoint& p) { return d < p.day; });
  return std::prev(it)->level.to_double();
}

double ratio(const Decimal& num, const Decimal& den) {
  return num.to_double() / den.to_double();
}

struct PeriodDay {
  const DayPoint* point;
  Decimal previous_value;
  double factor;  // 1 + r_t, or 1 when the base is not positive
};

}  // namespace

PerfResult measure(const PerfInput& in) {
  check_series(in);
  constexpr double kTradingDays = 252.0;
  constexpr double kMonths = 12.0;

  const Date before = in.from.plus_days(-1);
  PerfResult out;
  out.from = in.from;
  out.to = in.to;
  out.days = in.to - in.from + 1;

  // Opening value, then the entries inside the period.
  auto first_in = std::find_if(in.series.begin(), in.series.end(),
                               [&](const DayPoint& p) { return p.day > before; });
  out.opening_value = std::prev(first_in)->value;
  std::vector<PeriodDay> days;
  Decimal value = out.opening_value;
  // Most days have no flow: their sums skip adding zero (the same exact
  // results, without the work).
  for (auto it = first_in; it != in.series.end() && it->day <= in.to; ++it) {
    const bool in_flow = !it->inflow.is_zero(), out_flow = !it->outflow.is_zero();
    const Decimal base = in_flow ? value + it->inflow : value;
    double factor = 1.0;
    if (base.is_positive()) {
      factor = out_flow ? ratio(it->value + it->outflow, base) : ratio(it->value, base);
      out.daily.push_back({it->day, factor - 1.0});
    }
    days.push_back({&*it, value, factor});
    if (in_flow) out.inflow += it->inflow;
    if (out_flow) out.outflow += it->outflow;
    value = it->value;
  }
  out.closing_value = value;

  // True TWR and its index.
  std::vector<IndexPoint> index{{before, 1.0}};
  double growth = 1.0;
  for (const PeriodDay& d : days) {
    growth *= d.factor;
    index.push_back({d.point->day, growth});
  }
  out.twr = {growth - 1.0, annualize(growth - 1.0, out.days)};

  // Calendar months: TWR, Modified Dietz, benchmark.
  std::size_t j = 0;
  Decimal month_open = out.opening_value;
  double md_growth = 1.0;
  bool md_defined = true;
  for (Date a = in.from; a <= in.to;) {
    const Date b = std::min(a.month_end(), in.to);
    MonthRow row;
    row.year = a.year();
    row.month = a.month();
    row.first = a;
    row.last = b;
    row.complete = a.day() == 1 && b == a.month_end();
    row.opening_value = month_open;
    const long long span = b - a + 1;  // D, days of the month inside the period
    Decimal weighted = Decimal(span) * month_open;
    double month_growth = 1.0;
    Decimal close = month_open;
    for (; j < days.size() && days[j].point->day <= b; ++j) {
      const DayPoint& p = *days[j].point;
      const long long k = p.day - a;  // 0 for the first day of the month
      if (!p.inflow.is_zero()) {
        row.inflow += p.inflow;
        weighted += Decimal(span - k) * p.inflow;
      }
      if (!p.outflow.is_zero()) {
        row.outflow += p.outflow;
        weighted -= Decimal(span - k - 1) * p.outflow;
      }
      month_growth *= days[j].factor;
      close = p.value;
    }
    row.closing_value = close;
    row.twr = month_growth - 1.0;
    // (EMV - BMV - F) / (BMV + sum w_i F_i), both sides multiplied by D.
    const Decimal gain = close - month_open - (row.inflow - row.outflow);
    if (weighted.is_positive()) {
      row.modified_dietz = ratio(Decimal(span) * gain, weighted);
      md_growth *= 1.0 + *row.modified_dietz;
    } else if (!gain.is_zero()) {
      md_defined = false;
    }
    if (in.benchmark) {
      row.benchmark = level_at(*in.benchmark, b) / level_at(*in.benchmark, a.plus_days(-1)) - 1.0;
    }
    out.months.push_back(row);
    month_open = close;
    a = b.plus_days(1);
  }
  if (md_defined)
    out.modified_dietz = ReturnFigure{md_growth - 1.0, annualize(md_growth - 1.0, out.days)};

  // Money-weighted return, from the portfolio's side: money in positive;
  // one net amount a day, by day (the days are strictly increasing, none
  // after `to`). A day without a flow adds nothing: solve_mwr() leaves
  // zero amounts out.
  std::vector<CashFlow> flows{{before, out.opening_value.to_double()}};
  Decimal last;  // the net amount of `to`
  for (const PeriodDay& d : days) {
    const DayPoint& p = *d.point;
    if (p.inflow.is_zero() && p.outflow.is_zero()) continue;
    const Decimal amount = p.inflow - p.outflow;
    if (p.day == in.to)
      last = amount;
    else
      flows.push_back({p.day, amount.to_double()});
  }
  flows.push_back({in.to, (last - out.closing_value).to_double()});
  out.mwr = solve_mwr(flows, before, in.to);
  if (out.mwr.status == MwrStatus::kOk && out.mwr.period_rate) {
    out.mwr_figure =
        ReturnFigure{*out.mwr.period_rate, out.days >= 365 ? out.mwr.annual_rate : std::nullopt};
  }

  // Risk.
  std::vector<double> daily;
  for (const DailyReturn& d : out.daily) daily.push_back(d.r);
  out.risk.daily_observations = static_cast<int>(daily.size());
  if (auto sd = sample_sd(daily)) out.risk.daily_volatility = *sd * std::sqrt(kTradingDays);
  std::vector<double> monthly;
  std::vector<double> active;
  for (const MonthRow& m : out.months) {
    if (!m.complete) continue;
    monthly.push_back(m.twr);
    if (m.benchmark) active.push_back(m.twr - *m.benchmark);
  }
  out.risk.monthly_observations = static_cast<int>(monthly.size());
  if (auto sd = sample_sd(monthly)) out.risk.monthly_volatility = *sd * std::sqrt(kMonths);
  out.risk.max_drawdown = max_drawdown(index);
  if (in.risk_free_annual && out.twr.annualized && out.risk.monthly_volatility &&
      *out.risk.monthly_volatility > 0) {
    out.risk.sharpe =
        (*out.twr.annualized - in.risk_free_annual->to_double()) / *out.risk.monthly_volatility;
  }

  if (in.benchmark) {
    BenchmarkFigures bf;
    const double b = level_at(*in.benchmark, in.to) / level_at(*in.benchmark, before) - 1.0;
    bf.benchmark = {b, annualize(b, out.days)};
    bf.excess_arithmetic = out.twr.period - b;
    bf.excess_geometric = (1.0 + out.twr.period) / (1.0 + b) - 1.0;
    if (out.twr.annualized && bf.benchmark.annualized) {
      bf.excess_arithmetic_annualized = *out.twr.annualized - *bf.benchmark.annualized;
      bf.excess_geometric_annualized =
          (1.0 + *out.twr.annualized) / (1.0 + *bf.benchmark.annualized) - 1.0;
    }
    if (auto sd = sample_sd(active)) bf.tracking_error = *sd * std::sqrt(kMonths);
    out.benchmark = bf;
  }
  return out;
}

}  // namespace keel::perf
