// Benchmark comparison: level lookup, excess returns, tracking error.
#include <doctest/doctest.h>

#include <cmath>
#include <vector>

#include "perf/performance.h"

using keel::Date;
using keel::Decimal;
using namespace keel::perf;

namespace {

DayPoint pt(const char* day, const char* value) {
  return {Date::parse(day), Decimal::parse(value), 0, 0};
}
LevelPoint lv(const char* day, const char* level) {
  return {Date::parse(day), Decimal::parse(level)};
}

}  // namespace

TEST_CASE("perf benchmark: the latest level on or before each day is used") {
  // Period April 2025. L(03-31) = latest on or before 03-31 = 200 (03-28);
  // L(04-30) = 210 (04-29). B = 210 / 200 - 1 = 0.05. Portfolio: 1000 -> 1100.
  PerfInput in;
  in.from = Date::parse("2025-04-01");
  in.to = Date::parse("2025-04-30");
  in.series = {pt("2025-03-31", "1000"), pt("2025-04-30", "1100")};
  in.benchmark = std::vector<LevelPoint>{lv("2025-03-20", "150"), lv("2025-03-28", "200"),
                                         lv("2025-04-29", "210"), lv("2025-05-02", "999")};
  const PerfResult res = measure(in);
  REQUIRE(res.benchmark.has_value());
  CHECK(res.benchmark->benchmark.period == doctest::Approx(0.05).epsilon(1e-12));
  CHECK(res.benchmark->excess_arithmetic == doctest::Approx(0.1 - 0.05).epsilon(1e-12));
  CHECK(res.benchmark->excess_geometric == doctest::Approx(1.1 / 1.05 - 1).epsilon(1e-12));
  CHECK(*res.months[0].benchmark == doctest::Approx(0.05).epsilon(1e-12));
  CHECK_FALSE(res.benchmark->tracking_error.has_value());  // one month only
}

TEST_CASE("perf benchmark: tracking error of monthly active returns") {
  // Portfolio months +3 %, -1 %, +2 %; benchmark months +1 %, +1 %, +1 %.
  // Active: 0.02, -0.02, 0.01; mean 1/300; squares (5/300)^2 + (7/300)^2 +
  // (2/300)^2 = 78/90000; / 2 -> sd = sqrt(39/90000).
  PerfInput in;
  in.from = Date::parse("2025-01-01");
  in.to = Date::parse("2025-03-31");
  in.series = {pt("2024-12-31", "1000"), pt("2025-01-31", "1030"), pt("2025-02-28", "1019.7"),
               pt("2025-03-31", "1040.094")};
  in.benchmark = std::vector<LevelPoint>{lv("2024-12-31", "100"), lv("2025-01-31", "101"),
                                         lv("2025-02-28", "102.01"), lv("2025-03-31", "103.0301")};
  const PerfResult res = measure(in);
  REQUIRE(res.benchmark->tracking_error.has_value());
  CHECK(*res.benchmark->tracking_error ==
        doctest::Approx(std::sqrt(39.0 / 90000) * std::sqrt(12.0)).epsilon(1e-9));
  CHECK_FALSE(res.benchmark->excess_arithmetic_annualized.has_value());
}
