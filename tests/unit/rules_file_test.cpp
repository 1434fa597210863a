// Rule files: defaults, every table read, and each kind of refusal named by
// file, line and key.
#include <doctest/doctest.h>

#include "core/error.h"
#include "rules/rule.h"

using namespace keel;
using namespace keel::rules;

namespace {

const char* kMinimal = "[scope]\naccounts = [\"Main\"]\n";

Rule parse(const std::string& text) {
  return parse_rule(text, "r.toml");
}

void refused(const std::string& text, const std::string& message) {
  CHECK_THROWS_WITH_AS(parse(text), message.c_str(), InputError);
}

}  // namespace

TEST_CASE("rule file: a minimal rule takes every default") {
  const Rule r = parse(kMinimal);
  CHECK(r.name == "r");
  CHECK(r.accounts == std::vector<std::string>{"Main"});
  CHECK(r.universe == Universe::all_stocks);
  CHECK(r.screen.metric == "pe");
  CHECK(r.screen.cheap == Cheap::low);
  CHECK(r.screen.max_age_days == 180);
  CHECK(r.screen.exclude_non_positive);
  CHECK(r.screen.min_names == 5);
  CHECK_FALSE(r.screen.winsorize_pct);
  CHECK(r.selection.by == SelectBy::z);
  CHECK(r.selection.z_max == -0.5);
  CHECK_FALSE(r.selection.exit_z);
  CHECK(r.weights.scheme == Scheme::equal);
  CHECK(r.weights.max_weight == Decimal(1));
  CHECK(r.weights.sleeves.empty());
  CHECK(r.trading.fee_fixed.is_zero());
  CHECK(r.trading.lot_order == LotOrder::highest_cost);
  CHECK(r.rebalance_months == 1);
  CHECK(r.text == kMinimal);
}

TEST_CASE("rule file: the shipped example reads with its values") {
  const Rule r = load_rule(std::string(KEEL_SOURCE_DIR) + "/examples/rules/low-pe.toml");
  CHECK(r.name == "Low P/E, equal weight");
  CHECK(r.accounts.size() == 2);
  CHECK(r.screen.max_age_days == 120);
  CHECK(r.screen.min_names == 10);
  REQUIRE(r.screen.winsorize_pct);
  CHECK(r.screen.winsorize_pct->first == 5.0);
  CHECK(r.screen.winsorize_pct->second == 95.0);
  CHECK(*r.selection.exit_z == 0.0);
  CHECK(r.weights.max_weight == Decimal::parse("0.1"));
  REQUIRE(r.weights.sleeves.size() == 1);
  CHECK(r.weights.sleeves[0].symbol == "BONDX");
  CHECK(r.weights.sleeves[0].weight == Decimal::parse("0.2"));
  CHECK(r.trading.drift_pct_points == Decimal(1));
  CHECK(r.trading.drift_rel_pct == Decimal(25));
  CHECK(r.trading.min_trade == Decimal(100));
  CHECK(r.trading.fee_fixed == Decimal(1));
  CHECK(r.trading.fee_bps == Decimal(5));
  CHECK(r.trading.lot_order == LotOrder::losses_first);
}

TEST_CASE("rule file: scope by symbols or by sector") {
  const Rule list = parse("[scope]\naccounts = [\"Main\"]\nsymbols = [\"A\", \"B\"]\n");
  CHECK(list.universe == Universe::list);
  CHECK(list.symbols == std::vector<std::string>{"A", "B"});
  const Rule sector = parse("[scope]\naccounts = [\"Main\"]\nsector = \"Tools\"\n");
  CHECK(sector.universe == Universe::sector);
  CHECK(sector.sector == "Tools");
}

TEST_CASE("rule file: an unknown key suggests the nearest valid key") {
  refused(std::string(kMinimal) + "[screen]\nmax_age = 30\n",
          "r.toml:4: key 'screen.max_age': unknown key; did you mean 'max_age_days'?");
  refused(std::string(kMinimal) + "[selection]\nby = \"z\"\n",
          "r.toml:3: key 'selection': unknown key; did you mean 'select'?");
  refused(std::string(kMinimal) + "[trading]\nfee_bsp = 3\n",
          "r.toml:4: key 'trading.fee_bsp': unknown key; did you mean 'fee_bps'?");
}

TEST_CASE("rule file: an unknown key far from any lists the valid keys") {
  refused(std::string(kMinimal) + "[weights]\ncolour = \"red\"\n",
          "r.toml:4: key 'weights.colour': unknown key; expected one of: scheme, tilt, "
          "max_weight_pct");
}

TEST_CASE("edit distance counts insertions, deletions and substitutions") {
  CHECK(edit_distance("kitten", "sitting") == 3);
  CHECK(edit_distance("", "abc") == 3);
  CHECK(edit_distance("fee_bsp", "fee_bps") == 2);
  CHECK(edit_distance("same", "same") == 0);
}

TEST_CASE("rule file: a value out of range is refused") {
  refused(std::string(kMinimal) + "[screen]\nmin_names = 1\n",
          "r.toml:4: key 'screen.min_names': 1 is out of range; must be from 2 to 1000000");
  refused(std::string(kMinimal) + "[select]\nz_max = -11\n",
          "r.toml:4: key 'select.z_max': -11 is out of range; must be at least -10 and at most 10");
  refused(std::string(kMinimal) + "[trading]\ncash_reserve_pct = 100\n",
          "r.toml:4: key 'trading.cash_reserve_pct': 100 is out of range; must be at least 0 and "
          "below 100");
  refused(
      std::string(kMinimal) + "[screen]\nwinsorize_pct = [95, 5]\n",
      "r.toml:4: key 'screen.winsorize_pct': the lower percentile 95 must be below the upper 5");
}

TEST_CASE("rule file: a wrong type is refused") {
  refused(std::string(kMinimal) + "[screen]\nmax_age_days = \"90\"\n",
          "r.toml:4: key 'screen.max_age_days': must be a whole number from 1 to 3660");
  refused(std::string(kMinimal) + "[screen]\ncheap = \"cheap\"\n",
          "r.toml:4: key 'screen.cheap': 'cheap' is not one of \"low\", \"high\"");
  refused("[scope]\naccounts = \"Main\"\n",
          "r.toml:2: key 'scope.accounts': must be an array of strings");
}

TEST_CASE("rule file: the accounts are required") {
  refused("[screen]\nmetric = \"pe\"\n",
          "r.toml: key 'scope.accounts': required; name the accounts the rule manages, e.g. "
          "accounts = [\"Brokerage\"]");
}

TEST_CASE("rule file: an exit threshold tighter than the entry is refused") {
  refused(std::string(kMinimal) + "[select]\nz_max = -0.5\nexit_z = -1\n",
          "r.toml:5: key 'select.exit_z': -1 is below select.z_max (-0.5); the exit threshold "
          "must be at or above the entry threshold");
}

TEST_CASE("rule file: a key of another selection method is refused") {
  refused(std::string(kMinimal) + "[select]\nby = \"count\"\nz_max = -1\n",
          "r.toml:5: key 'select.z_max': applies only with by = \"z\" (this rule selects by "
          "\"count\")");
}

TEST_CASE("rule file: sleeves that take the whole pool cannot sum to one") {
  refused(std::string(kMinimal) +
              "[[sleeve]]\nsymbol = \"B1\"\nweight_pct = 60\n[[sleeve]]\nsymbol = \"B2\"\n"
              "weight_pct = 40\n",
          "r.toml:8: key 'sleeve.weight_pct': weights cannot sum to one: the sleeves take 100% of "
          "the pool, leaving nothing for the screened names");
}

TEST_CASE("rule file: a cap too low for the count cannot sum to one") {
  refused(std::string(kMinimal) +
              "[select]\nby = \"count\"\ncount = 4\n[weights]\nmax_weight_pct = 20\n",
          "r.toml:7: key 'weights.max_weight_pct': weights cannot sum to one: 4 names x 20% = 80% "
          "is less than the 100% the screened names must fill");
}

TEST_CASE("rule file: a later error names a key left at its default") {
  const Rule r = parse(kMinimal);
  CHECK_THROWS_WITH_AS(r.fail("select.z_max", "selects no name"),
                       "r.toml: key 'select.z_max' (default -0.5): selects no name", InputError);
  const Rule given = parse(std::string(kMinimal) + "[select]\nz_max = -2\n");
  CHECK_THROWS_WITH_AS(given.fail("select.z_max", "selects no name"),
                       "r.toml:4: key 'select.z_max': selects no name", InputError);
}

TEST_CASE("rule file: invalid TOML is refused with its position") {
  CHECK_THROWS_AS(parse("[scope\naccounts = 1\n"), InputError);
  try {
    parse("[scope\n");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()).rfind("r.toml:1:", 0) == 0);
  }
}

TEST_CASE("fee estimate: fixed plus basis points, to the cent") {
  TradingRule t;
  t.fee_fixed = Decimal(1);
  t.fee_bps = Decimal(5);
  CHECK(t.fee(Decimal(10000)) == Decimal(6));
  CHECK(t.fee(Decimal::parse("1234.5")) == Decimal::parse("1.62"));  // 1 + 0.61725
  CHECK(t.fee(Decimal()) == Decimal());
}

TEST_CASE("rule file: a track record takes its documented defaults") {
  const Rule r = parse(std::string(kMinimal) + "[track_record]\n");
  REQUIRE(r.track_record);
  CHECK(r.track_record->window_months == 36);
  CHECK(r.track_record->horizon_months == 12);
  CHECK(r.track_record->max_correlation == 0);
  CHECK(r.track_record->min_observations == 24);
  CHECK(r.track_record->method == Correlation::pearson);
  CHECK(r.track_record->returns == TrackReturns::relative);
  CHECK_FALSE(parse(kMinimal).track_record);
}

TEST_CASE("rule file: a track record reads every key") {
  const Rule r = parse(std::string(kMinimal) +
                       "[track_record]\nwindow_months = 24\nhorizon_months = 3\n"
                       "max_correlation = -0.1\nmin_observations = 12\nmethod = \"spearman\"\n"
                       "returns = \"zscore\"\n");
  CHECK(r.track_record->window_months == 24);
  CHECK(r.track_record->horizon_months == 3);
  CHECK(r.track_record->max_correlation == -0.1);
  CHECK(r.track_record->min_observations == 12);
  CHECK(r.track_record->method == Correlation::spearman);
  CHECK(r.track_record->returns == TrackReturns::zscore);
}

TEST_CASE("rule file: a track-record window shorter than its horizon is refused") {
  refused(std::string(kMinimal) + "[track_record]\nwindow_months = 6\nhorizon_months = 12\n",
          "r.toml:4: key 'track_record.window_months': 6 months is shorter than "
          "track_record.horizon_months (12); each observation's return must end inside the "
          "window");
}

TEST_CASE("rule file: more track-record observations than the window allows are refused") {
  refused(std::string(kMinimal) + "[track_record]\nwindow_months = 30\n",
          "r.toml: key 'track_record.min_observations' (default 24): 24 is more than the window "
          "allows: 30 months less a horizon of 12 leave at most 18 monthly observations");
  refused(std::string(kMinimal) + "[track_record]\nmin_observations = 30\n",
          "r.toml:4: key 'track_record.min_observations': 30 is more than the window allows: 36 "
          "months less a horizon of 12 leave at most 24 monthly observations");
}

TEST_CASE("rule file: a misspelt track-record key suggests the nearest") {
  refused(std::string(kMinimal) + "[track_record]\nwindow_month = 36\n",
          "r.toml:4: key 'track_record.window_month': unknown key; did you mean 'window_months'?");
  refused(std::string(kMinimal) + "[track_record]\nmethod = \"kendall\"\n",
          "r.toml:4: key 'track_record.method': 'kendall' is not one of \"pearson\", "
          "\"spearman\"");
}

TEST_CASE("rule file: the single metric is a list of one") {
  const Rule r = parse(std::string(kMinimal) + "[screen]\nmetric = \"ey\"\ncheap = \"high\"\n");
  REQUIRE(r.screen.metrics().size() == 1);
  CHECK(r.screen.metrics()[0].name == "ey");
  CHECK(r.screen.metrics()[0].cheap == Cheap::high);
  CHECK(r.screen.metrics()[0].weight == 1);
}

TEST_CASE("rule file: several metrics are read in order with their weights") {
  const Rule r = parse(std::string(kMinimal) +
                       "[screen]\nmetrics = [{ name = \"pe\" }, { name = \"ey\", cheap = "
                       "\"high\", weight = 0.5 }]\n");
  REQUIRE(r.screen.metrics().size() == 2);
  CHECK(r.screen.metric == "pe");
  CHECK(r.screen.metrics()[1].name == "ey");
  CHECK(r.screen.metrics()[1].cheap == Cheap::high);
  CHECK(r.screen.metrics()[1].weight == 0.5);
}

TEST_CASE("rule file: a metric listed twice is refused") {
  refused(std::string(kMinimal) + "[screen]\nmetrics = [{ name = \"pe\" }, { name = \"pe\" }]\n",
          "r.toml:4: key 'screen.metrics': metric 'pe' is listed twice");
}

TEST_CASE("rule file: a metric weight of zero is refused") {
  refused(std::string(kMinimal) + "[screen]\nmetrics = [{ name = \"pe\", weight = 0 }]\n",
          "r.toml:4: key 'screen.metrics.weight': 0 is out of range; must be above 0 and at "
          "most 1000");
}

TEST_CASE("rule file: a misspelt key of a metric suggests the nearest") {
  refused(std::string(kMinimal) + "[screen]\nmetrics = [{ name = \"pe\", wieght = 2 }]\n",
          "r.toml:4: key 'screen.metrics.wieght': unknown key; did you mean 'weight'?");
}

TEST_CASE("rule file: within a field securities do not have is refused") {
  refused(std::string(kMinimal) + "[screen]\nwithin = \"sectr\"\n",
          "r.toml:4: key 'screen.within': securities have no field 'sectr'; did you mean "
          "'sector'?");
  refused(std::string(kMinimal) + "[screen]\nmin_group_size = 3\n",
          "r.toml:4: key 'screen.min_group_size': applies only with screen.within");
}
