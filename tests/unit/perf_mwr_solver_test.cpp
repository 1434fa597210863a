// Money-weighted return solver on hard cases. Where a rate is expected, the
// flows are built from that rate (final value = every flow grown at r* to the
// end, actual/365), so the solver must find r* back; elsewhere the outcome is
// a status. A root is also checked by putting it back into the equation.
#include <doctest/doctest.h>

#include <cmath>
#include <random>
#include <vector>

#include "core/error.h"
#include "perf/mwr.h"
#include "perf/performance.h"

using keel::Date;
using keel::Decimal;
using namespace keel::perf;

namespace {

Date start_day() {
  return Date::parse("2019-01-01");
}
Date at(int n) {
  return start_day().plus_days(n);
}

// The final flow that makes r the exact rate: minus every flow grown to `end`.
CashFlow closing_for(const std::vector<CashFlow>& flows, double r, Date end) {
  double fv = 0;
  for (const CashFlow& f : flows) fv += f.amount * std::pow(1 + r, (end - f.day) / 365.0);
  return {end, -fv};
}

// Discounted sum at r relative to the gross flows; about 1e-16 at a true root.
double relative_npv(const std::vector<CashFlow>& flows, double r, Date start) {
  double npv = 0;
  double gross = 0;
  for (const CashFlow& f : flows) {
    npv += f.amount * std::pow(1 + r, -(f.day - start) / 365.0);
    gross += std::fabs(f.amount);
  }
  return npv / gross;
}

}  // namespace

TEST_CASE("perf mwr: a 6-day period with a small loss gives its period rate back") {
  // 10000 at close of day 0, 9985 at close of day 6, no flows: period -0.15 %.
  PerfInput in;
  in.from = at(1);
  in.to = at(6);
  in.series = {
      {at(0), Decimal(10000), 0, 0}, {at(3), Decimal(9990), 0, 0}, {at(6), Decimal(9985), 0, 0}};
  const PerfResult res = measure(in);
  REQUIRE(res.mwr.status == MwrStatus::kOk);
  REQUIRE(res.mwr_figure.has_value());
  CHECK(res.mwr_figure->period == doctest::Approx(-0.0015).epsilon(1e-12));
  CHECK_FALSE(res.mwr_figure->annualized.has_value());  // 6 days: not annualized
  CHECK(*res.mwr.annual_rate == doctest::Approx(std::pow(0.9985, 365.0 / 6) - 1).epsilon(1e-12));
  CHECK(res.twr.period == doctest::Approx(-0.0015).epsilon(1e-12));
}

TEST_CASE("perf mwr: a savings plan of 61 monthly payments at 6 % a year") {
  std::vector<CashFlow> flows;
  for (int m = 0; m <= 60; ++m) flows.push_back({start_day().plus_months(m), 250.0});
  const Date end = Date::parse("2024-01-31");
  flows.push_back(closing_for(flows, 0.06, end));
  const MwrSolution s = solve_mwr(flows, start_day(), end);
  REQUIRE(s.status == MwrStatus::kOk);
  CHECK(*s.annual_rate == doctest::Approx(0.06).epsilon(1e-11));
  CHECK(s.flow_sign_changes == 1);
}

TEST_CASE("perf mwr: a year that loses 70 %") {
  const std::vector<CashFlow> plain{{at(0), 1000.0}, {at(365), -300.0}};
  const MwrSolution a = solve_mwr(plain, at(0), at(365));
  REQUIRE(a.status == MwrStatus::kOk);
  CHECK(*a.annual_rate == doctest::Approx(-0.7).epsilon(1e-12));
  CHECK(*a.period_rate == doctest::Approx(-0.7).epsilon(1e-12));

  std::vector<CashFlow> with_top_up{{at(0), 1000.0}, {at(100), 500.0}};
  with_top_up.push_back(closing_for(with_top_up, -0.7, at(365)));
  const MwrSolution b = solve_mwr(with_top_up, at(0), at(365));
  REQUIRE(b.status == MwrStatus::kOk);
  CHECK(*b.annual_rate == doctest::Approx(-0.7).epsilon(1e-12));
}

TEST_CASE("perf mwr: a loss of nearly everything stays inside (-1, 0)") {
  const std::vector<CashFlow> flows{{at(0), 1000.0}, {at(365), -0.001}};
  const MwrSolution s = solve_mwr(flows, at(0), at(365));
  REQUIRE(s.status == MwrStatus::kOk);
  CHECK(*s.annual_rate > -1.0);
  CHECK(*s.annual_rate == doctest::Approx(-0.999999).epsilon(1e-12));
}

TEST_CASE("perf mwr: flows of 1e-2 and 1e9 in one series") {
  std::vector<CashFlow> flows{{at(0), 0.01}, {at(200), 1e9}, {at(250), -0.01}};
  flows.push_back(closing_for(flows, 0.04, at(400)));
  const MwrSolution s = solve_mwr(flows, at(0), at(400));
  REQUIRE(s.status == MwrStatus::kOk);
  CHECK(*s.annual_rate == doctest::Approx(0.04).epsilon(1e-11));
  CHECK(std::fabs(relative_npv(flows, *s.annual_rate, at(0))) < 1e-14);
}

TEST_CASE("perf mwr: 1e-2 growing to 1e9 in one day is a root beyond double range") {
  // ln(1+r) = 365 * ln(1e11): the annual rate overflows, the period rate and
  // the log rate do not.
  const std::vector<CashFlow> flows{{at(0), 0.01}, {at(1), -1e9}};
  const MwrSolution s = solve_mwr(flows, at(0), at(1));
  REQUIRE(s.status == MwrStatus::kOk);
  CHECK_FALSE(s.annual_rate.has_value());
  CHECK(*s.log_rate == doctest::Approx(365 * std::log(1e11)).epsilon(1e-12));
  CHECK(*s.period_rate == doctest::Approx(1e11 - 1).epsilon(1e-12));
}

TEST_CASE("perf mwr: flows all of one sign have no rate") {
  const std::vector<CashFlow> out{{at(0), -100.0}, {at(30), -50.0}, {at(90), -10.0}};
  CHECK(solve_mwr(out, at(0), at(90)).status == MwrStatus::kNoRoot);
  const std::vector<CashFlow> in{{at(0), 100.0}, {at(90), 10.0}};
  const MwrSolution s = solve_mwr(in, at(0), at(90));
  CHECK(s.status == MwrStatus::kNoRoot);
  CHECK_FALSE(s.annual_rate.has_value());
  CHECK(s.roots.empty());
}

TEST_CASE("perf mwr: flows that are all zero are reported as such") {
  const std::vector<CashFlow> flows{{at(0), 10.0}, {at(0), -10.0}, {at(5), 0.0}};
  CHECK(solve_mwr(flows, at(0), at(5)).status == MwrStatus::kNoCashFlows);
}

TEST_CASE("perf mwr: two roots are both reported, no number is chosen") {
  // +100, -230, +132 a year apart: 100 x^2 - 230 x + 132 = 0 with x = 1+r,
  // x = (230 +- sqrt(230^2 - 4*100*132)) / 200 = (230 +- 10) / 200: 10 % and 20 %.
  const std::vector<CashFlow> flows{{at(0), 100.0}, {at(365), -230.0}, {at(730), 132.0}};
  const MwrSolution s = solve_mwr(flows, at(0), at(730));
  CHECK(s.status == MwrStatus::kMultipleRoots);
  CHECK(s.flow_sign_changes == 2);
  CHECK_FALSE(s.annual_rate.has_value());
  REQUIRE(s.roots.size() == 2);
  CHECK(s.roots[0] == doctest::Approx(0.1).epsilon(1e-12));
  CHECK(s.roots[1] == doctest::Approx(0.2).epsilon(1e-12));
}

TEST_CASE("perf mwr: two roots from a series are reported by measure()") {
  // 100 in, 230 taken out after a year, 132 put in on the last day and lost.
  PerfInput in;
  in.from = at(1);
  in.to = at(730);
  in.series = {{at(0), Decimal(100), 0, 0},
               {at(365), Decimal(0), 0, Decimal(230)},
               {at(730), Decimal(0), Decimal(132), 0}};
  const PerfResult res = measure(in);
  CHECK(res.mwr.status == MwrStatus::kMultipleRoots);
  CHECK_FALSE(res.mwr_figure.has_value());
  CHECK(res.mwr.roots.size() == 2);
}

TEST_CASE("perf mwr: two roots two grid steps apart are both found") {
  // +100, -200.5, +100.5 a year apart: x = (200.5 +- sqrt(200.5^2 - 4*100*100.5)) / 200
  // = (200.5 +- 0.5) / 200, so 1+r is 1.0 or 1.005: rates of 0 % and 0.5 %.
  const std::vector<CashFlow> flows{{at(0), 100.0}, {at(365), -200.5}, {at(730), 100.5}};
  const MwrSolution s = solve_mwr(flows, at(0), at(730));
  CHECK(s.status == MwrStatus::kMultipleRoots);
  REQUIRE(s.roots.size() == 2);
  CHECK(std::fabs(s.roots[0]) < 1e-12);
  CHECK(s.roots[1] == doctest::Approx(0.005).epsilon(1e-10));
}

TEST_CASE("perf mwr: mixed signs whose discounted sum never crosses zero have no rate") {
  // 100 x^2 - 230 x + 140 has no real root (230^2 < 4 * 100 * 140).
  const std::vector<CashFlow> flows{{at(0), 100.0}, {at(365), -230.0}, {at(730), 140.0}};
  const MwrSolution s = solve_mwr(flows, at(0), at(730));
  CHECK(s.status == MwrStatus::kNoRoot);
  CHECK(s.roots.empty());
}

TEST_CASE("perf mwr: several sign changes with a single root give that root") {
  std::vector<CashFlow> flows{{at(0), 1000.0}, {at(200), -100.0}, {at(300), 50.0}};
  flows.push_back(closing_for(flows, 0.08, at(730)));
  const MwrSolution s = solve_mwr(flows, at(0), at(730));
  REQUIRE(s.status == MwrStatus::kOk);
  CHECK(s.flow_sign_changes == 3);
  CHECK(*s.annual_rate == doctest::Approx(0.08).epsilon(1e-11));
}

TEST_CASE("perf mwr: a flow outside the period is refused") {
  const std::vector<CashFlow> flows{{at(0), 100.0}, {at(40), -101.0}};
  CHECK_THROWS_AS(solve_mwr(flows, at(0), at(30)), keel::InputError);
}

TEST_CASE("perf mwr: rates built into random flow sets are found back") {
  // 200 invented cases, fixed seed: 2 to 40 payments in on random days over
  // up to 10 years, some withdrawals, and a closing value grown at a rate r*
  // between -90 % and +200 % a year. Whatever the sign pattern, the solver
  // must give r* back (or, with several roots, list r* among them).
  std::mt19937 gen(20250101);
  std::uniform_real_distribution<double> rate(-0.9, 2.0);
  std::uniform_real_distribution<double> amount(1.0, 1e6);
  std::uniform_int_distribution<int> count(2, 40);
  std::uniform_int_distribution<int> horizon(30, 3650);
  std::bernoulli_distribution withdraw(0.2);
  for (int c = 0; c < 200; ++c) {
    const double r = rate(gen);
    const int span = horizon(gen);
    std::uniform_int_distribution<int> when(0, span - 1);
    std::vector<CashFlow> flows{{at(0), amount(gen)}};
    const int n = count(gen);
    for (int i = 1; i < n; ++i)
      flows.push_back({at(when(gen)), withdraw(gen) ? -0.1 * amount(gen) : amount(gen)});
    const CashFlow closing = closing_for(flows, r, at(span));
    if (closing.amount >= 0) continue;  // withdrawals exceeded the value: not a portfolio
    flows.push_back(closing);
    const MwrSolution s = solve_mwr(flows, at(0), at(span));
    CAPTURE(c);
    CAPTURE(r);
    REQUIRE(s.status != MwrStatus::kNoRoot);
    bool found = false;
    for (double root : s.roots) found = found || std::fabs(root - r) <= 1e-9 * (1 + std::fabs(r));
    CHECK(found);
    if (s.status == MwrStatus::kOk) CHECK(*s.annual_rate == doctest::Approx(r).epsilon(1e-9));
  }
}
