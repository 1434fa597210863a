// Rule keys set from the command line (rules::with_setting): the same checks
// as the file, messages naming the option.
#include <doctest/doctest.h>

#include "core/error.h"
#include "rules/rule.h"

using namespace keel;
using namespace keel::rules;

namespace {

const char* kByCount =
    "[scope]\naccounts = [\"Main\"]\n[select]\nby = \"count\"\ncount = 10\n"
    "[weights]\nmax_weight_pct = 12\n";

Rule by_count() {
  return parse_rule(kByCount, "r.toml");
}

}  // namespace

TEST_CASE("rule setting: a number replaces the file's value") {
  const Rule r = with_setting(by_count(), "select.count", "20", "--vary");
  CHECK(r.selection.count == 20);
  CHECK(r.weights.max_weight == Decimal::parse("0.12"));
  CHECK(r.text == kByCount);
}

TEST_CASE("rule setting: a key the file left out is added to its table") {
  const Rule r = with_setting(by_count(), "screen.max_age_days", "90", "--vary");
  CHECK(r.screen.max_age_days == 90);
  const Rule t = with_setting(by_count(), "trading.fee_bps", "2.5", "--vary");
  CHECK(t.trading.fee_bps == Decimal::parse("2.5"));
}

TEST_CASE("rule setting: earlier settings are kept and the same key is replaced") {
  Rule r = with_setting(by_count(), "select.count", "20", "--vary");
  r = with_setting(r, "screen.min_names", "30", "--vary");
  r = with_setting(r, "select.count", "25", "--vary");
  CHECK(r.selection.count == 25);
  CHECK(r.screen.min_names == 30);
  CHECK(r.settings.size() == 2);
}

TEST_CASE("rule setting: a bare word is read as text, an array as an array") {
  const Rule r = with_setting(by_count(), "screen.cheap", "high", "--vary");
  CHECK(r.screen.cheap == Cheap::high);
  const Rule w = with_setting(by_count(), "screen.winsorize_pct", "[1, 99]", "--vary");
  REQUIRE(w.screen.winsorize_pct);
  CHECK(w.screen.winsorize_pct->first == 1.0);
}

TEST_CASE("rule setting: a value out of range is refused naming the option") {
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "select.count", "0", "--vary"),
                       "--vary select.count=0: key 'select.count': 0 is out of range; must be "
                       "from 1 to 1000000",
                       InputError);
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "screen.cheap", "dear", "--vary"),
                       "--vary screen.cheap=dear: key 'screen.cheap': 'dear' is not one of "
                       "\"low\", \"high\"",
                       InputError);
}

TEST_CASE("rule setting: a check across keys names the option's key") {
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "select.z_max", "-1", "--vary"),
                       "--vary select.z_max=-1: key 'select.z_max': applies only with by = \"z\" "
                       "(this rule selects by \"count\")",
                       InputError);
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "select.count", "5", "--vary"),
                       "r.toml:7: key 'weights.max_weight_pct': weights cannot sum to one: 5 "
                       "names x 12% = 60% is less than the 100% the screened names must fill",
                       InputError);
}

TEST_CASE("rule setting: an unknown key suggests the nearest") {
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "select.cout", "5", "--vary"),
                       "--vary: 'select.cout' is not a rule key; did you mean 'select.count'?",
                       InputError);
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "select", "5", "--vary"),
                       "--vary: 'select' is not a rule key; did you mean 'select.by'?", InputError);
  CHECK_THROWS_WITH_AS(with_setting(by_count(), "sleeve.weight_pct", "5", "--vary"),
                       "--vary: 'sleeve.weight_pct' cannot be set here: a rule may have several "
                       "sleeves",
                       InputError);
}

TEST_CASE("rule setting: a later error names the option that set the key") {
  const Rule r = with_setting(by_count(), "screen.min_names", "40", "--vary");
  CHECK(r.where("screen.min_names") == "--vary screen.min_names=40: key 'screen.min_names'");
  CHECK(r.where("select.count") == "r.toml:5: key 'select.count'");
}
