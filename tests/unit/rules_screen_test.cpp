// The screen: exclusions, winsorizing, z-scores and selection with its
// hysteresis band. Expected z values follow from the textbook formula
// z = (x - mean) / s with the sample standard deviation s (n - 1); for
// 6, 8, 10, 12, 14 the mean is 10 and s = sqrt(40 / 4) = sqrt(10).
#include <doctest/doctest.h>

#include <cmath>

#include "core/error.h"
#include "rules/engine.h"

using namespace keel;
using namespace keel::rules;

namespace {

const Date kAsOf = Date::parse("2024-05-31");

Rule rule(const std::string& extra = "") {
  return parse_rule("[scope]\naccounts = [\"Main\"]\n" + extra, "r.toml");
}

Candidate name(const std::string& symbol, const char* value, bool held = false,
               const char* period = "2024-03-31") {
  static std::int64_t next = 1;
  Candidate c;
  c.security_id = next++;
  c.symbol = symbol;
  c.figure = Figure{Decimal::parse(value), Date::parse(period), Date::parse("2024-04-30")};
  c.has_price = true;
  c.held = held;
  return c;
}

// A, B, C, D, E with values 6, 8, 10, 12, 14.
std::vector<Candidate> five(bool c_held = false, bool d_held = false) {
  return {name("A", "6"), name("B", "8"), name("C", "10", c_held), name("D", "12", d_held),
          name("E", "14")};
}

const ScreenLine& line(const ScreenResult& r, const std::string& symbol) {
  for (const auto& l : r.lines)
    if (l.symbol == symbol) return l;
  throw std::runtime_error("no line " + symbol);
}

}  // namespace

TEST_CASE("screen: z-scores use the sample standard deviation") {
  const auto r = screen(rule(), kAsOf, five());
  CHECK(r.passed == 5);
  CHECK(r.mean == doctest::Approx(10.0).epsilon(1e-15));
  CHECK(r.sd == doctest::Approx(std::sqrt(10.0)).epsilon(1e-15));
  CHECK(*line(r, "A").z == doctest::Approx(-4.0 / std::sqrt(10.0)).epsilon(1e-15));
  CHECK(*line(r, "B").z == doctest::Approx(-2.0 / std::sqrt(10.0)).epsilon(1e-15));
  CHECK(*line(r, "C").z == doctest::Approx(0.0));
  CHECK(*line(r, "E").z == doctest::Approx(4.0 / std::sqrt(10.0)).epsilon(1e-15));
}

TEST_CASE("screen: when high is cheap the z-score is negated") {
  const auto r = screen(rule("[screen]\ncheap = \"high\"\n"), kAsOf, five());
  CHECK(*line(r, "E").z == doctest::Approx(-4.0 / std::sqrt(10.0)).epsilon(1e-15));
  CHECK(r.lines.front().symbol == "E");
}

TEST_CASE("screen: passing names come by z, the excluded after them by symbol") {
  auto c = five();
  c.push_back(name("Z", "-1"));
  c.push_back(name("Y", "0"));
  const auto r = screen(rule(), kAsOf, c);
  std::vector<std::string> order;
  for (const auto& l : r.lines) order.push_back(l.symbol);
  CHECK(order == std::vector<std::string>{"A", "B", "C", "D", "E", "Y", "Z"});
}

TEST_CASE("screen: names with the same z come by symbol") {
  std::vector<Candidate> c{name("B", "6"), name("D", "8"), name("C", "8"), name("A", "10"),
                           name("E", "14")};
  const auto r = screen(rule(), kAsOf, c);
  std::vector<std::string> order;
  for (const auto& l : r.lines) order.push_back(l.symbol);
  CHECK(order == std::vector<std::string>{"B", "C", "D", "A", "E"});
  CHECK(*line(r, "C").z == *line(r, "D").z);
}

TEST_CASE("screen: without words the lines, z's and selection are the same, with no notes") {
  auto c = five(true);
  c.push_back(name("OLD", "9", false, "2023-10-31"));
  c.push_back(name("NEG", "-3.5", true));
  auto gone = name("GONE", "9");
  gone.ended = Date::parse("2024-05-02");
  c.push_back(gone);
  auto no_close = name("NOCLOSE", "9");
  no_close.has_price = false;
  c.push_back(no_close);
  Candidate none;
  none.security_id = 900;
  none.symbol = "NOFIG";
  none.has_price = true;
  c.push_back(none);
  const Rule r = rule("[select]\nexit_z = 0\n");
  const auto said = screen(r, kAsOf, c);
  const auto quiet = screen(r, kAsOf, c, Explain::none);
  CHECK_FALSE(quiet.explained);
  REQUIRE(quiet.lines.size() == said.lines.size());
  CHECK(quiet.passed == said.passed);
  CHECK(quiet.selected == said.selected);
  for (std::size_t i = 0; i < said.lines.size(); ++i) {
    const auto& a = said.lines[i];
    const auto& b = quiet.lines[i];
    CHECK(b.symbol == a.symbol);
    CHECK(b.z == a.z);
    CHECK(b.value == a.value);
    CHECK(b.age_days == a.age_days);
    CHECK(b.passed == a.passed);
    CHECK(b.selected == a.selected);
    CHECK(b.held == a.held);
    CHECK(b.note.empty());
    CHECK(b.excluded_reason.empty());
  }
  CHECK(line(said, "C").note == "held; z = 0.00 <= exit 0.00");
  CHECK(line(said, "NEG").note == "out: not positive (-3.5)");
}

TEST_CASE("screen: each exclusion says why") {
  auto c = five();
  Candidate none;
  none.security_id = 900;
  none.symbol = "NOFIG";
  none.has_price = true;
  c.push_back(none);
  c.push_back(name("OLD", "9", false, "2023-10-31"));
  c.push_back(name("NEG", "-3.5"));
  auto no_close = name("NOCLOSE", "9");
  no_close.has_price = false;
  c.push_back(no_close);
  const auto r = screen(rule(), kAsOf, c);
  CHECK(r.passed == 5);
  CHECK(line(r, "NOFIG").excluded_reason == "no 'pe' figure known on 2024-05-31");
  CHECK(line(r, "OLD").excluded_reason ==
        "stale: the figure for 2023-10-31 is 213 days old (max 180)");
  CHECK(line(r, "NEG").excluded_reason == "not positive (-3.5)");
  CHECK(line(r, "NOCLOSE").excluded_reason == "no close on or before 2024-05-31");
  CHECK_FALSE(line(r, "NEG").z);
  CHECK_FALSE(line(r, "NEG").selected);
}

TEST_CASE("screen: non-positive values pass when the rule keeps them") {
  auto c = five();
  c.push_back(name("NEG", "-3.5"));
  const auto r = screen(rule("[screen]\nexclude_non_positive = false\n"), kAsOf, c);
  CHECK(r.passed == 6);
  CHECK(line(r, "NEG").passed);
}

TEST_CASE("screen: fewer names than the minimum select nothing, with the reason") {
  const Rule r = rule();
  std::vector<Candidate> c{name("C", "10"), name("A", "6"), name("B", "8")};
  const auto s = screen(r, kAsOf, c);
  REQUIRE(s.refusal);
  CHECK(s.refusal->text(r) ==
        "r.toml: key 'screen.min_names' (default 5): only 3 names pass the screen on "
        "2024-05-31; the rule needs at least 5");
  CHECK(s.passed == 3);
  CHECK(s.selected == 0);
  // The lines are still there to be shown, by symbol.
  REQUIRE(s.lines.size() == 3);
  CHECK(s.lines[0].symbol == "A");
  CHECK(s.lines[2].symbol == "C");
}

TEST_CASE("screen: identical values leave nothing to score") {
  const Rule r = rule();
  std::vector<Candidate> c{name("A", "7"), name("B", "7"), name("C", "7"), name("D", "7"),
                           name("E", "7")};
  const auto s = screen(r, kAsOf, c);
  REQUIRE(s.refusal);
  CHECK(s.refusal->text(r) ==
        "r.toml: key 'screen.metric' (default \"pe\"): all 5 names passing the screen on "
        "2024-05-31 have the same value; z-scores need some spread");
}

TEST_CASE("screen: winsorizing clips at linearly interpolated percentiles") {
  // numpy.percentile([1, 2, 3, 4, 5], [10, 90]) = [1.4, 4.6] (linear: h = (n-1)p).
  std::vector<Candidate> c{name("A", "1"), name("B", "2"), name("C", "3"), name("D", "4"),
                           name("E", "5")};
  const auto r = screen(rule("[screen]\nwinsorize_pct = [10, 90]\n"), kAsOf, c);
  CHECK(*r.clip_low == doctest::Approx(1.4).epsilon(1e-15));
  CHECK(*r.clip_high == doctest::Approx(4.6).epsilon(1e-15));
  CHECK(*line(r, "A").value == doctest::Approx(1.4).epsilon(1e-15));
  CHECK(*line(r, "C").value == 3.0);
  CHECK(r.mean == doctest::Approx(3.0).epsilon(1e-15));
}

TEST_CASE("screen: an outlier is clipped before the z-score") {
  std::vector<Candidate> c{name("A", "1"), name("B", "2"), name("C", "3"), name("D", "4"),
                           name("E", "100")};
  const auto r = screen(rule("[screen]\nwinsorize_pct = [0, 75]\n"), kAsOf, c);
  CHECK(*r.clip_high == 4.0);  // h = 4 x 0.75 = 3: the fourth value
  CHECK(*line(r, "E").value == 4.0);
  CHECK(r.mean == doctest::Approx(2.8).epsilon(1e-15));
}

TEST_CASE("selection by z: at or below the threshold") {
  const auto r = screen(rule(), kAsOf, five());
  CHECK(r.selected == 2);
  CHECK(line(r, "A").selected);
  CHECK(line(r, "A").note == "z = -1.26 <= -0.50");
  CHECK(line(r, "B").selected);
  CHECK_FALSE(line(r, "C").selected);
  CHECK(line(r, "C").note == "z = 0.00 > -0.50");
}

TEST_CASE("selection by count: the cheapest names by rank") {
  const auto r = screen(rule("[select]\nby = \"count\"\ncount = 2\n"), kAsOf, five());
  CHECK(r.selected == 2);
  CHECK(line(r, "B").note == "z = -0.63, rank 2 <= 2");
  CHECK(line(r, "C").note == "z = 0.00, rank 3 > 2");
}

TEST_CASE("selection by top_pct: ceil of the share of passing names") {
  const auto thirty = screen(rule("[select]\nby = \"top_pct\"\ntop_pct = 30\n"), kAsOf, five());
  CHECK(thirty.selected == 2);  // ceil(1.5)
  const auto twenty = screen(rule("[select]\nby = \"top_pct\"\ntop_pct = 20\n"), kAsOf, five());
  CHECK(twenty.selected == 1);  // exactly 1, not ceil(1.0000000001)
  const auto tiny = screen(rule("[select]\nby = \"top_pct\"\ntop_pct = 0.1\n"), kAsOf, five());
  CHECK(tiny.selected == 1);
}

TEST_CASE("selection: a held name stays inside the exit band and leaves past it") {
  const auto r = screen(rule("[select]\nz_max = -0.5\nexit_z = 0.5\n"), kAsOf, five(true, true));
  CHECK(line(r, "C").selected);
  CHECK(line(r, "C").note == "held; z = 0.00 <= exit 0.50");
  CHECK_FALSE(line(r, "D").selected);
  CHECK(line(r, "D").note == "held; z = 0.63 > exit 0.50");
  CHECK(r.selected == 3);
}

TEST_CASE("selection: without a band a held name is judged like any other") {
  const auto r = screen(rule(), kAsOf, five(true));
  CHECK_FALSE(line(r, "C").selected);
}

TEST_CASE("selection: a threshold that selects nothing is a result with the reason") {
  const Rule r = rule("[select]\nz_max = -2\n");
  const auto s = screen(r, kAsOf, five());
  REQUIRE(s.refusal);
  CHECK(s.refusal->text(r) ==
        "r.toml:4: key 'select.z_max': selects no name on 2024-05-31: the lowest z among the 5 "
        "names passing the screen is -1.26");
  CHECK(s.selected == 0);
  CHECK(s.lines.front().symbol == "A");  // still in z order
  CHECK(*s.lines.front().z < *s.lines.back().z);
}

TEST_CASE("selection: a screen that selects nothing keeps each passing name's note") {
  const auto s = screen(rule("[select]\nz_max = -2\n"), kAsOf, five());
  REQUIRE(s.refusal);
  CHECK(s.lines.front().note == "z = -1.26 > -2.00");
  CHECK(s.lines.back().note == "z = 1.26 > -2.00");
}

namespace {

const char* kTrack = "[track_record]\nmin_observations = 20\nmax_correlation = -0.1\n";

Candidate with_track(Candidate c, std::optional<double> correlation, int observations) {
  c.track = TrackStat{correlation, observations};
  return c;
}

}  // namespace

TEST_CASE("track record: a name whose correlation is above the maximum is not selected") {
  auto c = five();
  for (auto& x : c) x = with_track(x, -0.5, 24);
  c[0] = with_track(c[0], 0.2, 24);  // A, the cheapest
  const auto r = screen(rule(kTrack), kAsOf, c);
  CHECK_FALSE(line(r, "A").selected);
  CHECK_FALSE(line(r, "A").track_ok);
  CHECK(line(r, "A").note ==
        "z = -1.26 <= -0.50, but its track record 0.20 > -0.10 over 24 "
        "observations");
  CHECK(line(r, "B").selected);
}

TEST_CASE("track record: a name with too few observations is not selected") {
  auto c = five();
  for (auto& x : c) x = with_track(x, -0.5, 24);
  c[0] = with_track(c[0], -0.9, 19);
  const auto r = screen(rule(kTrack), kAsOf, c);
  CHECK_FALSE(line(r, "A").selected);
  CHECK(line(r, "A").note ==
        "z = -1.26 <= -0.50, but its track record of 19 observations, fewer than 20");
}

TEST_CASE("track record: z-scores still run across every passing name") {
  auto c = five();
  for (auto& x : c) x = with_track(x, 0.9, 24);
  const auto r = screen(rule(kTrack), kAsOf, c);
  CHECK(*line(r, "A").z == doctest::Approx(-4.0 / std::sqrt(10.0)).epsilon(1e-15));
  CHECK(r.passed == 5);
}

TEST_CASE("track record: nothing selected for it names the track-record key") {
  auto c = five();
  for (auto& x : c) x = with_track(x, std::nullopt, 24);
  const auto r = screen(rule(kTrack), kAsOf, c);
  REQUIRE(r.refusal);
  CHECK(r.refusal->key == "track_record.max_correlation");
  CHECK(r.refusal->why ==
        "selects no name on 2024-05-31: all 5 names passing the screen fail the track record "
        "(fewer than 20 observations, or a correlation above -0.10)");
  CHECK(line(r, "A").note ==
        "z = -1.26 <= -0.50, but its track record of 24 observations has "
        "no spread");
}

TEST_CASE("track record: names kept out that the threshold would select are counted") {
  auto c = five();
  for (auto& x : c) x = with_track(x, -0.5, 24);
  c[0] = with_track(c[0], 0.5, 24);
  c[1] = with_track(c[1], 0.5, 24);
  const auto r = screen(rule(kTrack), kAsOf, c);
  REQUIRE(r.refusal);
  CHECK(r.refusal->why ==
        "selects no name on 2024-05-31: the track record keeps out all 2 names the screen "
        "would select");
}

TEST_CASE("track record: by count the next name with a good record takes the place") {
  auto c = five();
  for (auto& x : c) x = with_track(x, -0.5, 24);
  c[1] = with_track(c[1], 0.5, 24);  // B, second cheapest
  const auto r =
      screen(rule(std::string(kTrack) + "[select]\nby = \"count\"\ncount = 2\n"), kAsOf, c);
  CHECK(line(r, "A").selected);
  CHECK_FALSE(line(r, "B").selected);
  CHECK(line(r, "C").selected);
  CHECK(line(r, "C").note == "z = 0.00, rank 2 <= 2");
}

// Several metrics and groups. Expected values: pandas 1.5.3 (Debian 12
// python3-pandas), z = (x - mean) / std(ddof=1) per metric, the weighted mean
// of the metric z's, then standardised again the same way.
namespace {

Candidate with_more(Candidate c, std::optional<const char*> second, const char* group = nullptr) {
  c.more.push_back(
      second ? std::optional<Figure>(Figure{Decimal::parse(*second), Date::parse("2024-03-31"),
                                            Date::parse("2024-04-30")})
             : std::nullopt);
  if (group) c.group = group;
  return c;
}

const char* kTwo =
    "[screen]\nmetrics = [{ name = \"pe\", weight = 2 }, { name = \"ey\", cheap = \"high\" }]\n";

std::vector<Candidate> five_two() {
  auto c = five();
  const char* ey[] = {"0.10", "0.05", "0.20", "0.08", "0.07"};
  for (std::size_t i = 0; i < c.size(); ++i) c[i] = with_more(c[i], ey[i]);
  return c;
}

}  // namespace

TEST_CASE("several metrics: the score is the weighted mean of their z's, standardised again") {
  const auto r = screen(rule(kTwo), kAsOf, five_two());
  const double expected[] = {-1.0965048705814815, -0.179290949140928, -0.7379229722996258,
                             0.695837029750666, 1.3178817622713694};
  for (int i = 0; i < 5; ++i)
    CHECK(*line(r, std::string(1, static_cast<char>('A' + i))).z ==
          doctest::Approx(expected[i]).epsilon(1e-12));
  CHECK(*line(r, "A").metric_z.at(0) == doctest::Approx(-4.0 / std::sqrt(10.0)).epsilon(1e-15));
  CHECK(r.scored_metrics == std::vector<std::string>{"pe", "ey"});
}

TEST_CASE("several metrics: a name missing one fails by default") {
  auto c = five_two();
  c.push_back(with_more(name("F", "9"), std::nullopt));
  const auto r = screen(rule(kTwo), kAsOf, c);
  CHECK_FALSE(line(r, "F").passed);
  CHECK(line(r, "F").excluded_reason == "no 'ey' figure known on 2024-05-31");
}

TEST_CASE("several metrics: a name missing one is scored on what it has when the rule says so") {
  auto c = five_two();
  c.push_back(with_more(name("F", "9"), std::nullopt));
  const auto r = screen(rule(std::string(kTwo) + "if_missing = \"score_available\"\n"), kAsOf, c);
  CHECK(line(r, "F").passed);
  CHECK(line(r, "F").z);
  CHECK_FALSE(line(r, "F").metric_z.at(1));
}

TEST_CASE("several metrics: a stale second figure names its metric") {
  auto c = five_two();
  auto f = name("F", "9");
  f.more.push_back(
      Figure{Decimal::parse("0.1"), Date::parse("2023-01-31"), Date::parse("2023-02-28")});
  c.push_back(f);
  const auto r = screen(rule(kTwo), kAsOf, c);
  CHECK(line(r, "F").excluded_reason ==
        "stale: the 'ey' figure for 2023-01-31 is 486 days old (max 180)");
}

TEST_CASE("within sector: z-scores run within each sector, then across every name") {
  std::vector<Candidate> c;
  const char* values[] = {"6", "8", "10", "12", "14", "16"};
  for (int i = 0; i < 6; ++i) {
    auto n = name(std::string(1, static_cast<char>('A' + i)), values[i]);
    n.group = i < 3 ? "Tools" : "Water";
    c.push_back(n);
  }
  const auto r = screen(rule("[screen]\nwithin = \"sector\"\nmin_group_size = 3\n"), kAsOf, c);
  // Within each sector -1, 0, 1; across the six sd = sqrt(4 / 5).
  CHECK(*line(r, "A").metric_z.at(0) == doctest::Approx(-1.0).epsilon(1e-15));
  CHECK(*line(r, "D").metric_z.at(0) == doctest::Approx(-1.0).epsilon(1e-15));
  CHECK(*line(r, "D").z == doctest::Approx(-1.0 / std::sqrt(0.8)).epsilon(1e-15));
  CHECK(r.within == "sector");
}

TEST_CASE("within sector: a sector smaller than min_group_size fails with the reason") {
  auto c = five();
  for (int i = 0; i < 5; ++i) c[static_cast<std::size_t>(i)].group = i < 3 ? "Tools" : "Water";
  const auto r =
      screen(rule("[screen]\nwithin = \"sector\"\nmin_group_size = 3\nmin_names = 2\n"), kAsOf, c);
  CHECK_FALSE(line(r, "D").passed);
  CHECK(line(r, "D").excluded_reason ==
        "sector 'Water' has 2 names passing the screen, fewer than screen.min_group_size (3)");
  CHECK(r.passed == 3);
}

TEST_CASE("within sector: names a small sector leaves out follow the failing names by symbol") {
  auto c = five();
  for (int i = 0; i < 5; ++i) c[static_cast<std::size_t>(i)].group = i < 3 ? "Tools" : "Water";
  c.push_back(name("F", "-1"));  // fails: not positive
  c.front().group = "Water";     // A joins D and E: Tools keeps B and C
  const auto r =
      screen(rule("[screen]\nwithin = \"sector\"\nmin_group_size = 3\nmin_names = 2\n"), kAsOf, c);
  std::vector<std::string> order;
  for (const auto& l : r.lines) order.push_back(l.symbol);
  CHECK(order == std::vector<std::string>{"A", "D", "E", "B", "C", "F"});
  CHECK(r.passed == 3);
  CHECK(line(r, "B").note ==
        "out: sector 'Tools' has 2 names passing the screen, fewer than screen.min_group_size (3)");
  CHECK(line(r, "B").metric_z.empty());
  CHECK(line(r, "B").metric_values.size() == 1);
}

TEST_CASE("within sector: a small sector can be scored against the whole universe") {
  auto c = five();
  for (int i = 0; i < 5; ++i) c[static_cast<std::size_t>(i)].group = i < 3 ? "Tools" : "Water";
  const auto r = screen(rule("[screen]\nwithin = \"sector\"\nmin_group_size = 3\n"
                             "small_groups = \"whole_universe\"\n"),
                        kAsOf, c);
  const double expected[] = {-1.5233734382102122, -0.41905817746174684, 0.6852570832867184,
                             0.2793721183078313, 0.9778024140774094};
  for (int i = 0; i < 5; ++i)
    CHECK(*line(r, std::string(1, static_cast<char>('A' + i))).z ==
          doctest::Approx(expected[i]).epsilon(1e-12));
}
