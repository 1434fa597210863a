// Modified Dietz and true TWR on small monthly cases worked out by hand.
//
// Weight convention (docs/methods-returns.md): a month segment has D days,
// day index k = 0 for its first day. An inflow on day k counts from the start
// of that day, weight (D - k) / D; an outflow on day k counts from the end of
// that day, weight (D - k - 1) / D.
#include <doctest/doctest.h>

#include "core/error.h"
#include "perf/performance.h"

using keel::Date;
using keel::Decimal;
using namespace keel::perf;

namespace {

DayPoint pt(const char* day, const char* value, const char* in = "0", const char* out = "0") {
  return {Date::parse(day), Decimal::parse(value), Decimal::parse(in), Decimal::parse(out)};
}

// April 2025 (30 days) and May 2025 (31 days).
//   03-31 close 1000                     opening value
//   04-09 close 1050                     r = 1050 / 1000           = 1.05
//   04-10 inflow 200, close 1260         r = 1260 / (1050 + 200)   = 1.008
//   04-20 outflow 300, close 990         r = (990 + 300) / 1260    = 43/42
//   04-30 close 1000                     r = 1000 / 990
//   05-31 close 1020                     r = 1020 / 1000           = 1.02
// April TWR = 1.05 * 1.008 * 43/42 * 1000/990 - 1
//           = 1.0836 / 0.99 - 1 = 9.36 / 99                  = 0.0945454545...
// April Modified Dietz, D = 30:
//   inflow 200 on 04-10: k = 9,  weight (30 - 9) / 30      = 0.7
//   outflow 300 on 04-20: k = 19, weight (30 - 19 - 1) / 30 = 1/3
//   gain = 1000 - 1000 - (200 - 300)                          = 100
//   average capital = 1000 + 0.7 * 200 - (1/3) * 300 = 1040
//   MD = 100 / 1040                                           = 0.0961538461...
// May: no flows, both methods give 1020 / 1000 - 1 = 0.02.
// Linked over April and May:
//   TWR = (108.36 / 99) * 1.02 - 1 = 11.5272 / 99             = 0.1164363636...
//   MD  = (1140 / 1040) * 1.02 - 1                            = 0.1180769230...
PerfInput april_may() {
  PerfInput in;
  in.from = Date::parse("2025-04-01");
  in.to = Date::parse("2025-05-31");
  in.series = {pt("2025-03-31", "1000"),        pt("2025-04-09", "1050"),
               pt("2025-04-10", "1260", "200"), pt("2025-04-20", "990", "0", "300"),
               pt("2025-04-30", "1000"),        pt("2025-05-31", "1020")};
  return in;
}

}  // namespace

TEST_CASE("perf monthly: true TWR of a month with one inflow and one outflow") {
  const PerfResult res = measure(april_may());
  REQUIRE(res.months.size() == 2);
  CHECK(res.months[0].twr == doctest::Approx(9.36 / 99).epsilon(1e-12));
  CHECK(res.months[1].twr == doctest::Approx(0.02).epsilon(1e-12));
  CHECK(res.twr.period == doctest::Approx(11.5272 / 99).epsilon(1e-12));
  CHECK_FALSE(res.twr.annualized.has_value());  // 61 days: never annualized
}

TEST_CASE("perf monthly: Modified Dietz weights flows by the days they were invested") {
  const PerfResult res = measure(april_may());
  REQUIRE(res.months.size() == 2);
  REQUIRE(res.months[0].modified_dietz.has_value());
  CHECK(*res.months[0].modified_dietz == doctest::Approx(100.0 / 1040.0).epsilon(1e-12));
  REQUIRE(res.months[1].modified_dietz.has_value());
  CHECK(*res.months[1].modified_dietz == doctest::Approx(0.02).epsilon(1e-12));
}

TEST_CASE("perf monthly: Modified Dietz months are linked geometrically") {
  const PerfResult res = measure(april_may());
  REQUIRE(res.modified_dietz.has_value());
  CHECK(res.modified_dietz->period == doctest::Approx(1140.0 / 1040.0 * 1.02 - 1).epsilon(1e-12));
}

TEST_CASE("perf monthly: the table carries each month's values and flows") {
  const PerfResult res = measure(april_may());
  REQUIRE(res.months.size() == 2);
  const MonthRow& april = res.months[0];
  CHECK(april.year == 2025);
  CHECK(april.month == 4);
  CHECK(april.complete);
  CHECK(april.first == Date::parse("2025-04-01"));
  CHECK(april.last == Date::parse("2025-04-30"));
  CHECK(april.opening_value == Decimal(1000));
  CHECK(april.closing_value == Decimal(1000));
  CHECK(april.inflow == Decimal(200));
  CHECK(april.outflow == Decimal(300));
  CHECK(res.months[1].opening_value == Decimal(1000));
  CHECK(res.months[1].closing_value == Decimal(1020));
}

TEST_CASE("perf monthly: inflow on the first day weighs 1, outflow on the last day weighs 0") {
  // June 2025, D = 30. Inflow 500 on 06-01 (k = 0, weight 1); outflow 100 on
  // 06-30 (k = 29, weight 0). gain = 1480 - 1000 - 400 = 80;
  // average capital = 1000 + 500 = 1500; MD = 80 / 1500.
  // True TWR: 06-01 r = 1500 / 1500 = 1; 06-30 r = (1480 + 100) / 1500.
  PerfInput in;
  in.from = Date::parse("2025-06-01");
  in.to = Date::parse("2025-06-30");
  in.series = {pt("2025-05-31", "1000"), pt("2025-06-01", "1500", "500"),
               pt("2025-06-30", "1480", "0", "100")};
  const PerfResult res = measure(in);
  REQUIRE(res.months.size() == 1);
  CHECK(*res.months[0].modified_dietz == doctest::Approx(80.0 / 1500.0).epsilon(1e-12));
  CHECK(res.months[0].twr == doctest::Approx(1580.0 / 1500.0 - 1).epsilon(1e-12));
}

TEST_CASE("perf monthly: a partial month weighs flows over its days inside the period") {
  // Period 2025-04-16..2025-05-10: April segment D = 15 (16th..30th).
  // Inflow 300 on 04-20: k = 4, weight (15 - 4) / 15 = 11/15.
  // gain = 1400 - 1000 - 300 = 100; capital = 1000 + 300 * 11/15 = 1220.
  PerfInput in;
  in.from = Date::parse("2025-04-16");
  in.to = Date::parse("2025-05-10");
  in.series = {pt("2025-04-15", "1000"), pt("2025-04-20", "1300", "300"), pt("2025-04-30", "1400"),
               pt("2025-05-10", "1470")};
  const PerfResult res = measure(in);
  REQUIRE(res.months.size() == 2);
  CHECK_FALSE(res.months[0].complete);
  CHECK(res.months[0].first == Date::parse("2025-04-16"));
  CHECK(*res.months[0].modified_dietz == doctest::Approx(100.0 / 1220.0).epsilon(1e-12));
  CHECK(res.months[1].first == Date::parse("2025-05-01"));
  CHECK(res.months[1].last == Date::parse("2025-05-10"));
  CHECK(*res.months[1].modified_dietz == doctest::Approx(0.05).epsilon(1e-12));
  CHECK(res.risk.monthly_observations == 0);  // neither month is complete
}

TEST_CASE("perf monthly: a day on an empty portfolio contributes nothing to TWR") {
  // Empty at the start; 1000 comes in on 07-10 (base 0 + 1000 > 0), grows
  // to 1100. Days before have base 0 and no entry, so TWR = 1100/1000 - 1.
  PerfInput in;
  in.from = Date::parse("2025-07-01");
  in.to = Date::parse("2025-07-31");
  in.series = {pt("2025-06-30", "0"), pt("2025-07-05", "0"), pt("2025-07-10", "1000", "1000"),
               pt("2025-07-31", "1100")};
  const PerfResult res = measure(in);
  CHECK(res.twr.period == doctest::Approx(0.1).epsilon(1e-12));
  CHECK(res.daily.size() == 2);  // 07-05 has no positive base
  // D = 31, inflow on 07-10 (k = 9): capital = 1000 * 22/31; gain = 100.
  CHECK(*res.months[0].modified_dietz ==
        doctest::Approx(100.0 / (1000.0 * 22 / 31)).epsilon(1e-12));
}
