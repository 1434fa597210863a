// Track record: which month-ends count for a decision day, no look-ahead,
// and agreement with scipy. Expected correlations: scipy.stats.pearsonr and
// scipy.stats.spearmanr 1.10.1 (Debian 12 python3-scipy) on the same
// invented closes and figures, z with the sample sd (pandas' std, ddof=1).
#include <doctest/doctest.h>
#include <fmt/format.h>

#include <string>
#include <tuple>
#include <vector>

#include "ledger_fixture.h"
#include "market/day_view.h"
#include "rules/track_record.h"

namespace {

using keel::Date;
using keel::testing::day;
using namespace keel::rules;

constexpr int kNames = 5;
constexpr int kMonths = 16;  // 2023-01 to 2024-04

double close_of(int i, int k) {
  return 20 + i * 2 + ((k * (i + 3)) % 7) + 0.25 * (k % 4);
}
double pe_of(int i, int k) {
  return 6 + ((i * 5 + k * 3) % 9) + 0.5 * i;
}
Date month_end(int k) {
  return Date::from_ymd(2023 + k / 12, k % 12 + 1, 1).month_end();
}

// Five names with a close and a P/E (known that day) on each calendar month's
// last day: every month-end is a day with a close.
struct Months {
  keel::testing::LedgerFixture f;
  Months() {
    std::vector<std::tuple<std::string, std::string, std::string>> closes;
    std::vector<std::tuple<std::string, std::string, std::string, std::string>> pe;
    for (int i = 0; i < kNames; ++i) {
      f.security(fmt::format("T{}", i));
      for (int k = 0; k < kMonths; ++k) {
        const std::string d = month_end(k).str();
        closes.emplace_back(fmt::format("T{}", i), d, fmt::format("{:.2f}", close_of(i, k)));
        pe.emplace_back(fmt::format("T{}", i), d, d, fmt::format("{:.1f}", pe_of(i, k)));
      }
    }
    f.closes(closes);
    f.figures("pe", pe);
  }
  // Each name's track record on `when`, by symbol.
  std::map<std::string, TrackStat> at(const std::string& settings, const char* when) {
    const Rule rule = parse_rule(
        "[scope]\naccounts = [\"Main\"]\n[track_record]\nmin_observations = 3\n" + settings,
        "r.toml");
    const keel::market::DayView catalog(f.db);
    Inputs inputs(rule, catalog);
    const auto series = keel::market::Series::load(
        f.db, inputs.series_request(catalog, day("2023-01-01"), day("2024-04-30")));
    const TrackRecord record(rule, inputs, series);
    std::map<std::string, TrackStat> out;
    for (const auto& [id, stat] : record.at(day(when))) out[catalog.security(id)->symbol] = stat;
    return out;
  }
};

}  // namespace

TEST_CASE("track record: observations are the month-ends whose horizon ends by the day") {
  Months m;
  const std::string s = "window_months = 7\nhorizon_months = 1\n";
  // June: month-ends January to May (December 2022 would be in the window,
  // but there is no data).
  CHECK(m.at(s, "2023-06-30")["T0"].observations == 5);
  // December: June to November.
  CHECK(m.at(s, "2023-12-31")["T0"].observations == 6);
  // Before any horizon has ended there is nothing.
  CHECK(m.at(s, "2023-01-31")["T0"].observations == 0);
}

TEST_CASE("track record: a day inside a month counts from the month-end before it") {
  Months m;
  const std::string s = "window_months = 7\nhorizon_months = 1\n";
  const auto mid = m.at(s, "2023-12-15");
  const auto end = m.at(s, "2023-11-30");
  for (int i = 0; i < kNames; ++i) {
    const auto sym = fmt::format("T{}", i);
    CHECK(mid.at(sym).observations == end.at(sym).observations);
    CHECK(*mid.at(sym).correlation == *end.at(sym).correlation);
  }
}

TEST_CASE("track record: Pearson's r of past z with absolute returns matches scipy") {
  Months m;
  const auto r =
      m.at("window_months = 7\nhorizon_months = 1\nreturns = \"absolute\"\n", "2023-12-31");
  const double expected[] = {0.884655112012862, 0.46237366775822936, 0.013643277853353841,
                             -0.44724388356830347, -0.008655384252977894};
  for (int i = 0; i < kNames; ++i)
    CHECK(*r.at(fmt::format("T{}", i)).correlation == doctest::Approx(expected[i]).epsilon(1e-12));
}

TEST_CASE("track record: Spearman's rho of past z with relative returns matches scipy") {
  Months m;
  const auto r =
      m.at("window_months = 7\nhorizon_months = 2\nmethod = \"spearman\"\nreturns = \"relative\"\n",
           "2023-12-31");
  const double expected[] = {0.6324555320336759, -0.15811388300841897, -0.9486832980505137,
                             -0.15811388300841897, 0.6324555320336759};
  for (int i = 0; i < kNames; ++i) {
    CHECK(r.at(fmt::format("T{}", i)).observations == 5);
    CHECK(*r.at(fmt::format("T{}", i)).correlation == doctest::Approx(expected[i]).epsilon(1e-12));
  }
}

TEST_CASE("track record: a return ending after the day leaves the day's record unchanged") {
  Months m;
  const std::string s = "window_months = 7\nhorizon_months = 1\n";
  const auto before = m.at(s, "2023-12-31");
  m.f.closes({{"T0", "2024-01-31", "99.00"}, {"T3", "2024-01-31", "1.00"}}, true);
  const auto after = m.at(s, "2023-12-31");
  for (int i = 0; i < kNames; ++i) {
    const auto sym = fmt::format("T{}", i);
    CHECK(after.at(sym).observations == before.at(sym).observations);
    CHECK(*after.at(sym).correlation == *before.at(sym).correlation);
  }
}

TEST_CASE("track record: a return ending on the day does change the day's record") {
  Months m;
  const std::string s = "window_months = 7\nhorizon_months = 1\nreturns = \"absolute\"\n";
  const auto before = m.at(s, "2023-12-31");
  m.f.closes({{"T0", "2023-12-31", "99.00"}}, true);
  CHECK(*m.at(s, "2023-12-31").at("T0").correlation != *before.at("T0").correlation);
}

TEST_CASE("track record: Pearson's r is undefined without spread") {
  const std::vector<double> x{1, 2, 3}, same{4, 4, 4};
  CHECK_FALSE(pearson(x, same).has_value());
  CHECK(*pearson(x, x) == 1.0);
}

// The track record's series once lacked the exchange rates of a universe
// converted into the rule's currency: the screen then failed inside it on
// the first name priced in another currency.
TEST_CASE("track record: a name priced in another currency has its rates loaded") {
  Months m;
  keel::Security abroad;
  abroad.symbol = "T9";
  abroad.name = "T9 (invented)";
  abroad.currency = "EUR";
  abroad.kind = keel::SecurityKind::stock;
  keel::store::insert_security(m.f.db, abroad);
  std::vector<std::tuple<std::string, std::string, std::string>> closes;
  std::vector<std::tuple<std::string, std::string, std::string, std::string>> pe;
  for (int k = 0; k < kMonths; ++k) {
    const std::string d = month_end(k).str();
    closes.emplace_back("T9", d, fmt::format("{:.2f}", close_of(2, k)));
    pe.emplace_back("T9", d, d, fmt::format("{:.1f}", pe_of(2, k)));
  }
  m.f.closes(closes);
  m.f.figures("pe", pe);
  m.f.fx({{"EUR", "USD", "2022-12-30", "1.08"}});
  const Rule rule = parse_rule(
      "[scope]\naccounts = [\"Main\"]\n[track_record]\nmin_observations = 3\n", "r.toml");
  const keel::market::DayView catalog(m.f.db);
  Inputs inputs(rule, catalog, std::string("USD"), Convert::yes);
  const auto request = inputs.series_request(catalog, day("2023-01-01"), day("2024-04-30"));
  CHECK(request.currencies == std::vector<std::string>{"EUR", "USD"});
  const auto series = keel::market::Series::load(m.f.db, request);
  const TrackRecord record(rule, inputs, series);
  const auto stats = record.at(day("2024-04-30"));
  CHECK(stats.count(catalog.security("T9")->id) == 1);
  CHECK(stats.size() == kNames + 1);
}
