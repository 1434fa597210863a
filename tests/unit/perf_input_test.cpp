// Input checks of the performance module: bad series are refused with a
// message naming the day, never measured.
#include <doctest/doctest.h>

#include <vector>

#include "core/error.h"
#include "perf/performance.h"

using keel::Date;
using keel::Decimal;
using keel::InputError;
using namespace keel::perf;

namespace {

DayPoint pt(const char* day, const char* value, const char* in = "0", const char* out = "0") {
  return {Date::parse(day), Decimal::parse(value), Decimal::parse(in), Decimal::parse(out)};
}

PerfInput base() {
  PerfInput in;
  in.from = Date::parse("2025-04-01");
  in.to = Date::parse("2025-04-30");
  in.series = {pt("2025-03-31", "1000"), pt("2025-04-15", "1010")};
  return in;
}

}  // namespace

TEST_CASE("perf input: days out of order are refused") {
  PerfInput in = base();
  in.series.push_back(pt("2025-04-10", "1000"));
  CHECK_THROWS_WITH_AS(
      measure(in), "performance: series day 2025-04-10 does not come after 2025-04-15", InputError);
}

TEST_CASE("perf input: negative flows and values are refused") {
  PerfInput in = base();
  in.series[1] = pt("2025-04-15", "1010", "-5");
  CHECK_THROWS_AS(measure(in), InputError);
  in.series[1] = pt("2025-04-15", "1010", "0", "-5");
  CHECK_THROWS_AS(measure(in), InputError);
  in.series[1] = pt("2025-04-15", "-1");
  CHECK_THROWS_WITH_AS(measure(in), "performance: value on 2025-04-15 is negative (-1)",
                       InputError);
}

TEST_CASE("perf input: an opening value is required") {
  PerfInput in = base();
  in.series.erase(in.series.begin());
  CHECK_THROWS_WITH_AS(
      measure(in),
      "performance: no value on or before 2025-03-31, the day before the period starts",
      InputError);
}

TEST_CASE("perf input: a period that ends before it starts is refused") {
  PerfInput in = base();
  in.to = Date::parse("2025-03-30");
  CHECK_THROWS_AS(measure(in), InputError);
}

TEST_CASE("perf input: a benchmark must cover the opening day and be positive") {
  PerfInput in = base();
  in.benchmark = std::vector<LevelPoint>{{Date::parse("2025-04-01"), Decimal(100)}};
  CHECK_THROWS_AS(measure(in), InputError);
  in.benchmark = std::vector<LevelPoint>{{Date::parse("2025-03-01"), Decimal(0)}};
  CHECK_THROWS_AS(measure(in), InputError);
}

TEST_CASE("perf input: entries outside the period do not change the figures") {
  PerfInput in = base();
  const double plain = measure(in).twr.period;
  in.series.insert(in.series.begin(), pt("2025-03-01", "5", "7", "3"));
  in.series.push_back(pt("2025-05-02", "99999", "1"));
  const PerfResult res = measure(in);
  CHECK(res.twr.period == plain);
  CHECK(res.twr.period == doctest::Approx(0.01).epsilon(1e-12));
  CHECK(res.inflow == Decimal(0));
}

TEST_CASE("perf input: one day period on its own") {
  PerfInput in = base();
  in.from = in.to = Date::parse("2025-04-15");
  in.series = {pt("2025-04-14", "1000"), pt("2025-04-15", "1010")};
  const PerfResult res = measure(in);
  CHECK(res.days == 1);
  CHECK(res.twr.period == doctest::Approx(0.01).epsilon(1e-12));
  CHECK(res.mwr_figure->period == doctest::Approx(0.01).epsilon(1e-12));
  CHECK(res.months.size() == 1);
}
