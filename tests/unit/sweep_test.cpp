// Sweep grids: the --vary text and the variants built from it, before any data is read.
#include "backtest/sweep.h"

#include <doctest/doctest.h>

#include <cmath>

#include "core/error.h"
#include "rules/rule.h"

using namespace keel;
using namespace keel::backtest;

namespace {

rules::Rule by_count() {
  return rules::parse_rule("[scope]\naccounts = [\"Main\"]\n[select]\nby = \"count\"\ncount = 10\n",
                           "r.toml");
}

SweepRequest request(std::vector<std::string> vary) {
  SweepRequest r;
  for (const auto& v : vary) r.axes.push_back(parse_axis(v));
  return r;
}

}  // namespace

TEST_CASE("sweep: --vary splits values at commas outside brackets and quotes") {
  const Axis a = parse_axis("screen.winsorize_pct=[1, 99],[5,95]");
  CHECK(a.key == "screen.winsorize_pct");
  CHECK(a.values == std::vector<std::string>{"[1, 99]", "[5,95]"});
  CHECK(parse_axis("name=\"a,b\",c").values == std::vector<std::string>{"\"a,b\"", "c"});
}

TEST_CASE("sweep: --vary without a value or with an empty one is refused") {
  CHECK_THROWS_WITH_AS(parse_axis("select.count"),
                       "--vary: 'select.count' is not KEY=VALUE,VALUE,... (e.g. "
                       "select.count=5,10,20)",
                       InputError);
  CHECK_THROWS_WITH_AS(parse_axis("select.count=5,,10"),
                       "--vary: 'select.count=5,,10' has an empty value", InputError);
}

TEST_CASE("sweep: the grid runs the first axis slowest, each variant through the file's checks") {
  const auto rules =
      sweep_variants(by_count(), request({"select.count=5,20", "screen.max_age_days=30,60,90"}));
  REQUIRE(rules.size() == 6);
  CHECK(rules[0].selection.count == 5);
  CHECK(rules[0].screen.max_age_days == 30);
  CHECK(rules[2].screen.max_age_days == 90);
  CHECK(rules[3].selection.count == 20);
  CHECK(rules[5].screen.max_age_days == 90);
}

TEST_CASE("sweep: more variants than the maximum are refused naming the option") {
  SweepRequest r = request({"select.count=1,2,3", "screen.max_age_days=30,60"});
  r.max_variants = 5;
  CHECK_THROWS_WITH_AS(sweep_variants(by_count(), r),
                       "--vary: 6 variants is more than 5; the more variants are tried, the more "
                       "the best one owes to luck. Give --max-variants 6 to run them all",
                       InputError);
  r.max_variants = 6;
  CHECK(sweep_variants(by_count(), r).size() == 6);
}

TEST_CASE("sweep: a key that changes the data loaded is refused") {
  CHECK_THROWS_WITH_AS(sweep_variants(by_count(), request({"screen.metric=pe,pb"})),
                       "--vary screen.metric: a sweep reads the market data once, for the rule's "
                       "own universe and metric; sweep each metric in a run of its own",
                       InputError);
}

TEST_CASE("sweep: each variant's Sharpe ratio in the first half of the months and the rest") {
  SweepResult r;
  VariantRun a;
  // First half 0.01, 0.03: mean 0.02, sample sd 0.0141421356...; second 0.02, 0.02, 0.05:
  // mean 0.03, sample sd 0.0173205080... (hand computation).
  a.monthly = {0.01, 0.03, 0.02, 0.02, 0.05};
  VariantRun flat;
  flat.monthly = {0.01, 0.01, 0.02, 0.03};
  r.variants = {a, flat};
  const auto h = half_sharpes(r);
  REQUIRE(h.size() == 2);
  CHECK(*h[0].first == doctest::Approx(0.02 / std::sqrt(0.0002)).epsilon(1e-12));
  CHECK(*h[0].second == doctest::Approx(0.03 / std::sqrt(0.0003)).epsilon(1e-12));
  CHECK_FALSE(h[1].first.has_value());  // no spread: undefined
  CHECK(*h[1].second == doctest::Approx(0.025 / std::sqrt(0.00005)).epsilon(1e-12));
}
