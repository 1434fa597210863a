// Risk figures and annualization, checked against values worked out by hand
// from the definitions in docs/methods-returns.md.
#include <doctest/doctest.h>

#include <cmath>
#include <vector>

#include "perf/performance.h"
#include "perf/stats.h"

using keel::Date;
using keel::Decimal;
using namespace keel::perf;

namespace {

DayPoint pt(const char* day, const char* value, const char* in = "0", const char* out = "0") {
  return {Date::parse(day), Decimal::parse(value), Decimal::parse(in), Decimal::parse(out)};
}

// 2023, one entry per month end; monthly returns +2 %, -1 %, +2 %, ...
PerfInput alternating_year() {
  PerfInput in;
  in.from = Date::parse("2023-01-01");
  in.to = Date::parse("2023-12-31");
  in.series.push_back(pt("2022-12-31", "1000"));
  Decimal v(1000);  // exact: each month's value is the previous one times 1.02 or 0.99
  for (int m = 1; m <= 12; ++m) {
    v *= Decimal::parse(m % 2 == 1 ? "1.02" : "0.99");
    in.series.push_back({Date::from_ymd(2023, m, 1).month_end(), v, 0, 0});
  }
  return in;
}

}  // namespace

TEST_CASE("perf risk: sample standard deviation uses n - 1") {
  const std::vector<double> xs{1, 2, 3, 4};  // squares about 2.5: 5, divided by 3
  CHECK(*sample_sd(xs) == doctest::Approx(std::sqrt(5.0 / 3.0)).epsilon(1e-15));
  CHECK_FALSE(sample_sd(std::vector<double>{1.0}).has_value());
}

TEST_CASE("perf risk: periods shorter than a year are never annualized") {
  CHECK_FALSE(annualize(0.1, 364).has_value());
  CHECK(*annualize(0.1, 365) == doctest::Approx(0.1).epsilon(1e-15));
  CHECK(*annualize(0.21, 730) == doctest::Approx(0.1).epsilon(1e-14));
  CHECK(*annualize(-1.0, 400) == -1.0);
}

TEST_CASE("perf risk: daily volatility of the entry days' returns") {
  // 100 -> 110 -> 99 -> 108.9: returns 0.1, -0.1, 0.1; mean 1/30;
  // squares (2/30)^2 + (4/30)^2 + (2/30)^2 = 24/900; / 2 -> sd = sqrt(12)/30.
  PerfInput in;
  in.from = Date::parse("2024-05-06");
  in.to = Date::parse("2024-05-10");
  in.series = {pt("2024-05-05", "100"), pt("2024-05-06", "110"), pt("2024-05-08", "99"),
               pt("2024-05-10", "108.9")};
  const PerfResult res = measure(in);
  CHECK(res.risk.daily_observations == 3);
  CHECK(*res.risk.daily_volatility ==
        doctest::Approx(std::sqrt(12.0) / 30 * std::sqrt(252.0)).epsilon(1e-12));
}

TEST_CASE("perf risk: maximum drawdown gives its depth, peak and trough") {
  // Index 1, 1.1, 0.99, 1.089: from 1.1 on 05-06 down to 0.99 on 05-08.
  PerfInput in;
  in.from = Date::parse("2024-05-06");
  in.to = Date::parse("2024-05-10");
  in.series = {pt("2024-05-05", "100"), pt("2024-05-06", "110"), pt("2024-05-08", "99"),
               pt("2024-05-10", "108.9")};
  const auto dd = measure(in).risk.max_drawdown;
  REQUIRE(dd.has_value());
  CHECK(dd->depth == doctest::Approx(-0.1).epsilon(1e-12));
  CHECK(dd->peak == Date::parse("2024-05-06"));
  CHECK(dd->trough == Date::parse("2024-05-08"));
  CHECK_FALSE(dd->recovery.has_value());
}

TEST_CASE("perf risk: drawdown recovery is the first day back at the peak level") {
  const Date d = Date::parse("2024-01-01");
  const std::vector<IndexPoint> index{{d, 1.0},
                                      {d.plus_days(1), 1.2},
                                      {d.plus_days(2), 0.9},
                                      {d.plus_days(3), 1.0},
                                      {d.plus_days(4), 1.2},
                                      {d.plus_days(5), 1.3}};
  const auto dd = max_drawdown(index);
  REQUIRE(dd.has_value());
  CHECK(dd->depth == doctest::Approx(0.9 / 1.2 - 1).epsilon(1e-15));
  CHECK(dd->peak == d.plus_days(1));
  CHECK(dd->trough == d.plus_days(2));
  CHECK(dd->recovery == d.plus_days(4));
}

TEST_CASE("perf risk: an index that never falls has no drawdown") {
  const Date d = Date::parse("2024-01-01");
  const std::vector<IndexPoint> index{{d, 1.0}, {d.plus_days(1), 1.0}, {d.plus_days(2), 1.1}};
  CHECK_FALSE(max_drawdown(index).has_value());
}

TEST_CASE("perf risk: monthly volatility and Sharpe ratio over a year of complete months") {
  // Six months of +2 % and six of -1 %: mean 0.005, every deviation 0.015,
  // sample variance 12 * 0.015^2 / 11 = 0.0027 / 11.
  PerfInput in = alternating_year();
  in.risk_free_annual = Decimal::parse("0.01");
  const PerfResult res = measure(in);
  const double vol = std::sqrt(0.0027 / 11) * std::sqrt(12.0);
  const double twr = std::pow(1.02, 6) * std::pow(0.99, 6) - 1;
  CHECK(res.risk.monthly_observations == 12);
  CHECK(*res.risk.monthly_volatility == doctest::Approx(vol).epsilon(1e-12));
  CHECK(*res.twr.annualized == doctest::Approx(twr).epsilon(1e-12));  // 365 days
  REQUIRE(res.risk.sharpe.has_value());
  CHECK(*res.risk.sharpe == doctest::Approx((twr - 0.01) / vol).epsilon(1e-12));
}

TEST_CASE("perf risk: no Sharpe ratio without a risk-free rate or a full year") {
  CHECK_FALSE(measure(alternating_year()).risk.sharpe.has_value());
  PerfInput short_one = alternating_year();
  short_one.to = Date::parse("2023-11-30");
  short_one.risk_free_annual = Decimal::parse("0.01");
  const PerfResult res = measure(short_one);
  CHECK(res.risk.monthly_volatility.has_value());
  CHECK_FALSE(res.risk.sharpe.has_value());
}
