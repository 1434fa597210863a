// The standard two-year textbook case for time- and money-weighted return.
//
// One share bought at 100; a year later the price is 120, a dividend of 2 is
// paid and a second share is bought at 120; a year after that the price is
// 130, a dividend of 2 per share (4) is paid and both shares are sold.
// Expected: TWR about 15.84 % a year, MWR about 13.86 % a year (values from
// memory of the CFA Institute's curriculum). The test does not rely on the
// remembered values alone: it recomputes both from the definitions.
#include <doctest/doctest.h>

#include <cmath>

#include "perf/performance.h"

using keel::Date;
using keel::Decimal;
using namespace keel::perf;

namespace {

// Day 0 is 2020-12-31 (close before the period); day 365 is 2021-12-31 and
// day 730 is 2022-12-31 (neither year is a leap year).
Date day(int n) {
  return Date::from_ymd(2020, 12, 31).plus_days(n);
}

PerfInput textbook() {
  PerfInput in;
  in.from = day(1);
  in.to = day(730);
  in.series = {
      // Close of day 0: one share at 100.
      {day(0), Decimal(100), 0, 0},
      // Close of day 364: price 120 and the dividend of 2 received as cash.
      {day(364), Decimal(122), 0, 0},
      // Day 365: the dividend goes out to the investor, 120 comes in and buys
      // the second share; nothing moves in price: 2 shares x 120 = 240.
      {day(365), Decimal(240), Decimal(120), Decimal(2)},
      // Day 730: price 130, dividends 4, both shares sold, everything paid out.
      {day(730), Decimal(0), 0, Decimal(264)},
  };
  return in;
}

}  // namespace

TEST_CASE("perf textbook: true TWR links the two yearly returns and annualizes over two years") {
  const PerfResult res = measure(textbook());
  // Year 1: (120 + 2) / 100 = 1.22; year 2: (260 + 4) / 240 = 1.10.
  const double expected_period = 1.22 * 1.10 - 1.0;
  CHECK(res.days == 730);
  CHECK(res.twr.period == doctest::Approx(expected_period).epsilon(1e-12));
  REQUIRE(res.twr.annualized.has_value());
  CHECK(*res.twr.annualized == doctest::Approx(std::sqrt(1.22 * 1.10) - 1.0).epsilon(1e-12));
  CHECK(*res.twr.annualized == doctest::Approx(0.1584).epsilon(5e-4));  // 15.84 %, from memory
}

TEST_CASE("perf textbook: MWR is the root of the two-year cash-flow quadratic") {
  const PerfResult res = measure(textbook());
  // Flows into the portfolio: +100 at t=0, +120 - 2 = +118 at t=1, -264 at t=2.
  // With x = 1+r: 100 x^2 + 118 x - 264 = 0, so
  // x = (-118 + sqrt(118^2 + 4*100*264)) / 200 = (-118 + sqrt(119524)) / 200.
  const double x = (-118.0 + std::sqrt(119524.0)) / 200.0;
  REQUIRE(res.mwr.status == MwrStatus::kOk);
  REQUIRE(res.mwr.annual_rate.has_value());
  CHECK(*res.mwr.annual_rate == doctest::Approx(x - 1.0).epsilon(1e-12));
  CHECK(*res.mwr.annual_rate == doctest::Approx(0.1386).epsilon(5e-4));  // 13.86 %, from memory
  REQUIRE(res.mwr_figure.has_value());
  CHECK(res.mwr_figure->period == doctest::Approx(x * x - 1.0).epsilon(1e-12));
  REQUIRE(res.mwr_figure->annualized.has_value());
  CHECK(*res.mwr_figure->annualized == doctest::Approx(x - 1.0).epsilon(1e-12));
}
