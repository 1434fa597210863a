// Start-any-month windows, the split by market state, capture ratios and the
// falls of an index (perf/relative.h), each checked against figures worked
// out by hand from the definitions in that header; the capture definition is
// common practice (from memory).
#include <doctest/doctest.h>

#include <cmath>
#include <optional>
#include <stdexcept>
#include <vector>

#include "perf/relative.h"

using keel::Date;
using namespace keel::perf;

namespace {

using Months = std::vector<std::optional<double>>;

IndexPoint at(int day, double level) {
  return {Date::from_ymd(2024, 1, day), level};
}

}  // namespace

TEST_CASE("start-any-month: each window compounds its months") {
  const Months m{0.10, -0.10, 0.20, 0.05};
  const auto w = window_returns(m, 2);
  REQUIRE(w.size() == 3);
  CHECK(*w[0] == doctest::Approx(1.10 * 0.90 - 1).epsilon(1e-15));
  CHECK(*w[1] == doctest::Approx(0.90 * 1.20 - 1).epsilon(1e-15));
  CHECK(*w[2] == doctest::Approx(1.20 * 1.05 - 1).epsilon(1e-15));
}

TEST_CASE("start-any-month: a window with a missing month has no return") {
  const Months m{std::nullopt, 0.01, 0.02, std::nullopt};
  const auto w = window_returns(m, 2);
  REQUIRE(w.size() == 3);
  CHECK_FALSE(w[0].has_value());
  CHECK(*w[1] == doctest::Approx(1.01 * 1.02 - 1).epsilon(1e-15));
  CHECK_FALSE(w[2].has_value());
}

TEST_CASE("start-any-month: a window longer than the months gives no start") {
  CHECK(window_returns(Months{0.01, 0.02}, 3).empty());
  CHECK_THROWS_AS(window_returns(Months{0.01}, 0), std::invalid_argument);
}

TEST_CASE("start-any-month: excess counts starts ahead, mean, median, worst and best") {
  const Months a{0.05, 0.01, -0.02, 0.04, std::nullopt};
  const Months b{0.02, 0.03, -0.05, 0.04, 0.10};
  const auto s = compare_returns(a, b);  // excess 0.03, -0.02, 0.03, 0 over 4 starts
  CHECK(s.periods == 4);
  CHECK(s.ahead == 2);  // equal is not ahead
  CHECK(*s.mean == doctest::Approx(0.04 / 4).epsilon(1e-12));
  CHECK(*s.median == doctest::Approx(0.015).epsilon(1e-12));  // between 0 and 0.03
  CHECK(*s.worst == doctest::Approx(-0.02).epsilon(1e-12));
  CHECK(*s.best == doctest::Approx(0.03).epsilon(1e-12));
}

TEST_CASE("start-any-month: series of different lengths are refused") {
  CHECK_THROWS_AS(compare_returns(Months{0.1}, Months{0.1, 0.2}), std::invalid_argument);
}

TEST_CASE("down markets: months split by the benchmark's sign, a flat month counts as rose") {
  const Months r{-0.01, 0.03, 0.02, -0.04, 0.01};
  const Months b{-0.03, 0.04, 0.00, -0.02, std::nullopt};
  const auto s = split_by_state(r, b);
  CHECK(s.fell.periods == 2);
  CHECK(s.fell.ahead == 1);  // -0.01 > -0.03; -0.04 < -0.02
  CHECK(*s.fell.mean == doctest::Approx(-0.025).epsilon(1e-12));
  CHECK(*s.fell.benchmark_mean == doctest::Approx(-0.025).epsilon(1e-12));
  CHECK(*s.fell.mean_excess == doctest::Approx(0.0).epsilon(1e-12));
  CHECK(s.rose.periods == 2);
  CHECK(s.rose.ahead == 1);  // 0.02 > 0.00
  CHECK(*s.rose.mean == doctest::Approx(0.025).epsilon(1e-12));
  CHECK(*s.rose.benchmark_mean == doctest::Approx(0.02).epsilon(1e-12));
}

TEST_CASE("down markets: a state without periods has no means") {
  const auto s = split_by_state(Months{0.01, 0.02}, Months{0.01, 0.03});
  CHECK(s.fell.periods == 0);
  CHECK_FALSE(s.fell.mean.has_value());
  CHECK_FALSE(s.fell.mean_excess.has_value());
}

TEST_CASE("capture: ratio of geometric mean returns over up and over down months") {
  const Months r{0.02, -0.01, 0.03, -0.02};
  const Months b{0.04, -0.02, 0.01, -0.04};
  const auto c = capture(r, b);
  CHECK(c.up_months == 2);
  CHECK(c.down_months == 2);
  const double up = std::sqrt(1.02 * 1.03) - 1, up_b = std::sqrt(1.04 * 1.01) - 1;
  const double down = std::sqrt(0.99 * 0.98) - 1, down_b = std::sqrt(0.98 * 0.96) - 1;
  CHECK(*c.up == doctest::Approx(up / up_b).epsilon(1e-12));
  CHECK(*c.down == doctest::Approx(down / down_b).epsilon(1e-12));
}

TEST_CASE("capture: a series equal to the benchmark captures exactly one") {
  const Months b{0.04, -0.02, 0.01, -0.04, 0.0};
  const auto c = capture(b, b);
  CHECK(*c.up == doctest::Approx(1.0).epsilon(1e-14));
  CHECK(*c.down == doctest::Approx(1.0).epsilon(1e-14));
}

TEST_CASE("capture: no down month gives no down-capture") {
  const auto c = capture(Months{0.01, 0.02}, Months{0.03, 0.0});
  CHECK(c.down_months == 0);
  CHECK_FALSE(c.down.has_value());
  REQUIRE(c.up.has_value());
}

TEST_CASE("benchmark falls: episodes between new highs, deepest first, at most the count") {
  // Highs 100 (day 1), 110 (day 5), 120 (day 9); falls to 85, 99 and 114.
  const std::vector<IndexPoint> index{at(1, 100), at(2, 85),  at(3, 95), at(4, 100), at(5, 110),
                                      at(6, 99),  at(7, 105), at(8, 99), at(9, 120), at(10, 114)};
  const auto e = drawdown_episodes(index, 2);
  REQUIRE(e.size() == 2);
  CHECK(e[0].depth == doctest::Approx(-0.15).epsilon(1e-12));
  CHECK(e[0].peak == Date::from_ymd(2024, 1, 1));
  CHECK(e[0].trough == Date::from_ymd(2024, 1, 2));
  CHECK(*e[0].recovery == Date::from_ymd(2024, 1, 4));         // back at 100, not above
  CHECK(e[1].depth == doctest::Approx(-0.10).epsilon(1e-12));  // 99 / 110; 114 / 120 is left out
  CHECK(e[1].peak == Date::from_ymd(2024, 1, 5));
  CHECK(e[1].trough == Date::from_ymd(2024, 1, 6));  // the first day of the lowest level
  CHECK(*e[1].recovery == Date::from_ymd(2024, 1, 9));
}

TEST_CASE("benchmark falls: the last fall may not have recovered") {
  const std::vector<IndexPoint> index{at(1, 100), at(2, 120), at(3, 90), at(4, 100)};
  const auto e = drawdown_episodes(index, 3);
  REQUIRE(e.size() == 1);
  CHECK(e[0].depth == doctest::Approx(-0.25).epsilon(1e-12));
  CHECK_FALSE(e[0].recovery.has_value());
}

TEST_CASE("benchmark falls: the deepest is the maximum drawdown") {
  const std::vector<IndexPoint> index{at(1, 50), at(2, 40), at(3, 60), at(4, 30),
                                      at(5, 61), at(6, 61), at(7, 45), at(8, 70)};
  const auto e = drawdown_episodes(index, 3);
  const auto m = max_drawdown(index);
  REQUIRE(e.size() == 3);
  CHECK(e[0].depth == m->depth);
  CHECK(e[0].peak == m->peak);
  CHECK(e[0].trough == m->trough);
  CHECK(e[0].recovery == m->recovery);
}

TEST_CASE("benchmark falls: an index that never falls has none") {
  CHECK(drawdown_episodes(std::vector<IndexPoint>{at(1, 1), at(2, 2)}, 3).empty());
}
