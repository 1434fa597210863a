// The market::View contract (market/view.h), run on the same cases against
// both implementations: DayView, which reads the ledger for each question,
// and Series, preloaded in columns. Dates and figures are invented; each
// expectation is worked out by hand from the rows written below.
#include <doctest/doctest.h>
#include <sqlite3.h>

#include <functional>
#include <memory>
#include <stdexcept>
#include <string>
#include <tuple>
#include <vector>

#include "ledger_fixture.h"
#include "market/day_view.h"
#include "market/series.h"
#include "store/action_store.h"

using namespace keel;
using namespace keel::testing;
using keel::ActionKind;
using keel::CorporateAction;
using market::Close;
using market::Figure;

namespace {

// March 2024: Friday the 1st, weekends on 2/3, 9/10, 16/17, 23/24, 30/31;
// no close at all on Friday the 29th (a holiday).
struct MarketLedger : LedgerFixture {
  MarketLedger() {
    stock("AVEL", "Tools");
    stock("BRISK", "Power");   // listed late: first close on 2024-03-05
    stock("CALDO", "Tools");   // stale: no close after 2024-01-10
    stock("DUNMORE", "Care");  // splits and distributions
    Security fund;
    fund.symbol = "EVENFUND";
    fund.name = "Evenfund (invented)";
    fund.kind = SecurityKind::fund;
    fund.sector = "Funds";
    fund.currency = "USD";
    store::insert_security(db, fund);
    closes({{"AVEL", "2023-12-29", "9.5"},
            {"AVEL", "2024-03-01", "10.25"},
            {"AVEL", "2024-03-04", "10.5"},
            {"AVEL", "2024-03-28", "11"},
            {"AVEL", "2024-04-01", "11.125"},
            {"BRISK", "2024-03-05", "40"},
            {"BRISK", "2024-03-28", "41.5"},
            {"CALDO", "2024-01-10", "3.3"},
            {"DUNMORE", "2024-03-01", "80"},
            {"DUNMORE", "2024-03-08", "82"},
            {"DUNMORE", "2024-03-11", "41.2"},
            {"DUNMORE", "2024-03-28", "42"},
            {"EVENFUND", "2024-04-02", "100"}});
    figures("pe", {{"AVEL", "2023-12-31", "2024-02-01", "10"},
                   {"AVEL", "2023-12-31", "2024-03-01", "11"},    // restated
                   {"AVEL", "2024-01-31", "2024-03-15", "12"},    // a newer period, later
                   {"AVEL", "2023-09-30", "2024-03-20", "7"},     // an older period, later
                   {"BRISK", "2023-12-31", "2024-01-20", "20"},   // before its first close
                   {"CALDO", "2023-06-30", "2023-07-31", "5"}});  // stale
    figures("ey", {{"AVEL", "2023-12-31", "2024-02-01", "0.1"}});
    split_of("DUNMORE", "2024-03-09", "2");                      // a Saturday
    distribution("DUNMORE", "2024-03-16", "2024-03-25", "0.5");  // a Saturday
    distribution("AVEL", "2024-03-16", "2024-03-20", "0.1");
    distribution("DUNMORE", "2024-04-06", "2024-04-10", "0.5");
    fx({{"EUR", "USD", "2024-01-02", "1.10"},
        {"EUR", "USD", "2024-03-05", "1.12"},
        {"USD", "JPY", "2024-01-03", "150"},
        {"GBP", "CHF", "2024-01-03", "1.09"},
        {"EUR", "USD", "2024-05-02", "1.07"}});  // after the questions asked below
    act(ActionKind::spinoff, "AVEL", "2024-03-09", "BRISK", "0.5");  // a Saturday
    act(ActionKind::delisting, "CALDO", "2024-03-15", std::nullopt, std::nullopt, "0");
    const auto voided = act(ActionKind::merger, "DUNMORE", "2024-05-06", "AVEL", "0.5");
    CorporateAction v;
    v.security_id = id("DUNMORE");
    v.date = day("2024-05-06");
    v.kind = ActionKind::void_entry;
    v.voids_id = voided;
    write(v);
  }

  std::int64_t act(ActionKind kind, const std::string& symbol, const char* date,
                   std::optional<std::string> target, std::optional<const char*> ratio,
                   std::optional<const char*> cash = std::nullopt) {
    CorporateAction a;
    a.security_id = id(symbol);
    a.date = day(date);
    a.kind = kind;
    if (target) a.target_id = id(*target);
    if (ratio) a.ratio = dec(*ratio);
    if (cash) a.cash = dec(*cash);
    return write(a);
  }
  std::int64_t write(const CorporateAction& a) {
    store::WriteTransaction tx(db);
    const auto action_id = store::insert_action(db, a);
    tx.commit();
    return action_id;
  }

  void stock(const std::string& symbol, const std::string& sector) {
    Security s;
    s.symbol = symbol;
    s.name = symbol + " (invented)";
    s.sector = sector;
    s.currency = "USD";
    store::insert_security(db, s);
  }
  std::int64_t id(const std::string& symbol) { return store::security_with_symbol(db, symbol).id; }
};

// The two implementations, made the way their callers make them.
struct OneDay {
  static std::unique_ptr<market::View> make(store::Database& db) {
    return std::make_unique<market::DayView>(db);
  }
};
struct Preloaded {
  static std::unique_ptr<market::View> make(store::Database& db) {
    market::Series::Request r;
    r.from = day("2024-01-01");
    r.to = day("2024-06-30");
    r.metrics = {"pe", "ey"};
    r.currencies = {"EUR", "USD", "JPY", "GBP"};
    return std::make_unique<market::Series>(market::Series::load(db, r));
  }
};

// Series again, from the close packs the first load kept (market/close_pack.h).
struct Repacked {
  static std::unique_ptr<market::View> make(store::Database& db) {
    Preloaded::make(db);
    REQUIRE(db.sql().execAndGet("SELECT count(*) FROM close_pack").getInt() > 0);
    return Preloaded::make(db);
  }
};

// Series from packs that end on 2024-03-04, with every later close as their
// tails: the later closes are taken out, packed without them, and put back
// (after the packs' last days, which keeps the packs).
struct Tailed {
  static std::unique_ptr<market::View> make(store::Database& db) {
    auto& sql = db.sql();
    sql.exec("CREATE TEMP TABLE later AS SELECT * FROM price WHERE date > '2024-03-04'");
    sql.exec("DELETE FROM price WHERE date > '2024-03-04'");
    Preloaded::make(db);
    sql.exec("INSERT INTO price SELECT * FROM temp.later");
    sql.exec("DROP TABLE temp.later");
    REQUIRE(
        sql.execAndGet("SELECT count(*) FROM close_pack WHERE last_day <= '2024-03-04'").getInt() >
        0);
    REQUIRE(sql.execAndGet("SELECT count(*) FROM price p JOIN close_pack c ON c.security_id = "
                           "p.security_id AND p.date > c.last_day")
                .getInt() > 0);
    return Preloaded::make(db);
  }
};

std::optional<Close> close_at(const char* d, const char* price) {
  return Close{day(d), dec(price)};
}
std::optional<Figure> figure_of(const char* value, const char* period, const char* known) {
  return Figure{dec(value), day(period), day(known)};
}

}  // namespace

TYPE_TO_STRING(OneDay);
TYPE_TO_STRING(Preloaded);
TYPE_TO_STRING(Repacked);
TYPE_TO_STRING(Tailed);

TEST_CASE_TEMPLATE("market view: a close on the day, else the latest before it", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto avel = m.id("AVEL");
  CHECK(view->close(avel, day("2024-03-01")) == close_at("2024-03-01", "10.25"));
  CHECK(view->close(avel, day("2024-03-02")) == close_at("2024-03-01", "10.25"));  // Saturday
  CHECK(view->close(avel, day("2024-03-04")) == close_at("2024-03-04", "10.5"));
  // The close before the span's first day still counts.
  CHECK(view->close(avel, day("2024-01-01")) == close_at("2023-12-29", "9.5"));
}

TEST_CASE_TEMPLATE("market view: a weekday with no close at all gives the day before's", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  CHECK(view->close(m.id("AVEL"), day("2024-03-29")) == close_at("2024-03-28", "11"));
  CHECK(view->close(m.id("BRISK"), day("2024-03-29")) == close_at("2024-03-28", "41.5"));
}

TEST_CASE_TEMPLATE("market view: a late listing has no close before its first", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto brisk = m.id("BRISK");
  CHECK_FALSE(view->close(brisk, day("2024-03-04")).has_value());
  CHECK(view->close(brisk, day("2024-03-05")) == close_at("2024-03-05", "40"));
  // Its figure was known before it listed, and is visible then.
  CHECK(view->figure(brisk, "pe", day("2024-03-04")) ==
        figure_of("20", "2023-12-31", "2024-01-20"));
}

TEST_CASE_TEMPLATE("market view: a stale close and a stale figure are given with their days", V,
                   OneDay, Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto caldo = m.id("CALDO");
  CHECK(view->close(caldo, day("2024-06-28")) == close_at("2024-01-10", "3.3"));
  CHECK(view->figure(caldo, "pe", day("2024-06-28")) == figure_of("5", "2023-06-30", "2023-07-31"));
}

TEST_CASE_TEMPLATE("market view: a restatement replaces the figure from its known_on on", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto avel = m.id("AVEL");
  CHECK_FALSE(view->figure(avel, "pe", day("2024-01-31")).has_value());
  CHECK(view->figure(avel, "pe", day("2024-02-29")) == figure_of("10", "2023-12-31", "2024-02-01"));
  CHECK(view->figure(avel, "pe", day("2024-03-01")) == figure_of("11", "2023-12-31", "2024-03-01"));
}

TEST_CASE_TEMPLATE("market view: a figure known after the day is invisible on it", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto avel = m.id("AVEL");
  CHECK(view->figure(avel, "pe", day("2024-03-14")) == figure_of("11", "2023-12-31", "2024-03-01"));
  CHECK(view->figure(avel, "pe", day("2024-03-15")) == figure_of("12", "2024-01-31", "2024-03-15"));
  // An older period that becomes known later does not push back a newer one.
  CHECK(view->figure(avel, "pe", day("2024-03-20")) == figure_of("12", "2024-01-31", "2024-03-15"));
  // Asking an earlier day again gives the earlier answer.
  CHECK(view->figure(avel, "pe", day("2024-02-15")) == figure_of("10", "2023-12-31", "2024-02-01"));
  CHECK(view->figure(avel, "ey", day("2024-02-15")) ==
        figure_of("0.1", "2023-12-31", "2024-02-01"));
}

TEST_CASE_TEMPLATE("market view: splits in a span, a Saturday's included", V, OneDay, Preloaded,
                   Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto dunmore = m.id("DUNMORE");
  const std::vector<market::SplitEvent> split{{dunmore, day("2024-03-09"), dec("2")}};
  CHECK(view->splits(dunmore, day("2024-03-01"), day("2024-03-31")) == split);
  CHECK(view->splits(std::nullopt, day("2024-03-09"), day("2024-03-09")) == split);
  CHECK(view->splits(std::nullopt, day("2024-03-10"), day("2024-06-30")).empty());
  // Closes are as traded: the split shows in the price, not in the view.
  CHECK(view->close(dunmore, day("2024-03-10")) == close_at("2024-03-08", "82"));
}

TEST_CASE_TEMPLATE("market view: distributions on weekends, by date and then security", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto avel = m.id("AVEL"), dunmore = m.id("DUNMORE");
  const auto march = view->distributions(std::nullopt, day("2024-03-16"), day("2024-03-31"));
  REQUIRE(march.size() == 2);
  CHECK(march[0] == market::Distribution{avel, day("2024-03-16"), day("2024-03-20"), dec("0.1")});
  CHECK(march[1] ==
        market::Distribution{dunmore, day("2024-03-16"), day("2024-03-25"), dec("0.5")});
  CHECK(view->distributions(dunmore, day("2024-03-17"), day("2024-04-05")).empty());
  CHECK(view->distributions(dunmore, day("2024-03-01"), day("2024-06-30")).size() == 2);
}

TEST_CASE_TEMPLATE("market view: corporate actions in a span, a Saturday's included", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto all = view->actions(std::nullopt, day("2024-01-01"), day("2024-06-30"));
  REQUIRE(all.size() == 2);  // the voided merger and its void are left out
  CHECK(all[0].kind == ActionKind::spinoff);
  CHECK(all[0].security_id == m.id("AVEL"));
  CHECK(all[0].date == day("2024-03-09"));
  CHECK(all[0].target_id == m.id("BRISK"));
  CHECK(all[0].ratio == dec("0.5"));
  CHECK(all[1].kind == ActionKind::delisting);
  CHECK(all[1].cash == dec("0"));
  CHECK(view->actions(m.id("AVEL"), day("2024-03-09"), day("2024-03-09")).size() == 1);
  CHECK(view->actions(m.id("AVEL"), day("2024-03-10"), day("2024-06-30")).empty());
  CHECK(view->actions(m.id("DUNMORE"), day("2024-01-01"), day("2024-06-30")).empty());
}

TEST_CASE_TEMPLATE("market view: a delisting ends a name from its day on, a spin-off does not", V,
                   OneDay, Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  CHECK_FALSE(view->ended(m.id("CALDO"), day("2024-03-14")).has_value());
  CHECK(view->ended(m.id("CALDO"), day("2024-03-15")) == day("2024-03-15"));
  CHECK(view->ended(m.id("CALDO"), day("2024-06-30")) == day("2024-03-15"));
  CHECK_FALSE(view->ended(m.id("AVEL"), day("2024-06-30")).has_value());
  // A voided merger ends nothing.
  CHECK_FALSE(view->ended(m.id("DUNMORE"), day("2024-06-30")).has_value());
}

TEST_CASE_TEMPLATE("market view: the securities, their stocks' sectors and the metric names", V,
                   OneDay, Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  CHECK(view->securities().size() == 5);
  CHECK(view->securities().front().symbol == "AVEL");
  CHECK(view->sectors() == std::vector<std::string>{"Care", "Power", "Tools"});
  CHECK(view->metric_names() == std::vector<std::string>{"ey", "pe"});
  REQUIRE(view->security("BRISK"));
  CHECK(view->security(view->security("BRISK")->id)->symbol == "BRISK");
  CHECK(view->security("NOPE") == nullptr);
}

// What a view says about every security on every day up to `last`.
std::string answers_until(const market::View& view, Date first, Date last) {
  std::string out;
  for (Date d = first; d <= last; d = d.plus_days(1))
    for (const auto& s : view.securities()) {
      const auto c = view.close(s.id, d);
      const auto f = view.figure(s.id, "pe", d);
      out += d.str() + " " + s.symbol + " " + (c ? c->day.str() + "@" + c->price.str() : "-") +
             " " + (f ? f->value.str() + "/" + f->period.str() + "/" + f->known_on.str() : "-") +
             "\n";
    }
  for (const auto& e : view.distributions(std::nullopt, first, last))
    out += "dist " + e.ex_date.str() + " " + std::to_string(e.security_id) + "\n";
  for (const auto& e : view.splits(std::nullopt, first, last))
    out += "split " + e.date.str() + " " + std::to_string(e.security_id) + "\n";
  for (const auto& e : view.actions(std::nullopt, first, last))
    out += "action " + e.date.str() + " " + std::to_string(e.security_id) + "\n";
  for (const auto& s : view.securities())
    if (const auto end = view.ended(s.id, last))
      out += "ended " + s.symbol + " " + end->str() + "\n";
  return out;
}

TEST_CASE_TEMPLATE("look-ahead: changing the future leaves every answer about the past as it was",
                   V, OneDay, Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const Date first = day("2024-01-01"), last = day("2024-03-15");
  const std::string before = answers_until(*V::make(m.db), first, last);
  // The future changes: later closes (new and replaced), a restatement and a
  // new period known after the last day, later splits and distributions.
  m.closes({{"AVEL", "2024-03-18", "99"}, {"CALDO", "2024-03-18", "1"}});
  m.closes({{"AVEL", "2024-03-28", "12"}, {"BRISK", "2024-03-28", "1"}}, true);
  m.figures("pe", {{"AVEL", "2023-12-31", "2024-03-16", "98"},
                   {"AVEL", "2024-01-31", "2024-03-16", "99"},
                   {"CALDO", "2024-02-29", "2024-04-01", "1"},
                   {"DUNMORE", "2024-03-15", "2024-03-16", "4"}});
  m.split_of("AVEL", "2024-03-16", "10");
  m.distribution("BRISK", "2024-03-18", "2024-03-19", "3");
  m.act(ActionKind::merger, "AVEL", "2024-03-16", "BRISK", "2", "1");
  m.act(ActionKind::delisting, "BRISK", "2024-04-01", std::nullopt, std::nullopt, "3");
  const std::string after = answers_until(*V::make(m.db), first, last);
  CHECK(after == before);
  // The change is there, one day later.
  CHECK(V::make(m.db)->figure(m.id("AVEL"), "pe", day("2024-03-16"))->value == dec("99"));
}

TEST_CASE_TEMPLATE("market view: a stored rate on or before the day, and none before the first", V,
                   OneDay, Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto q = view->rate("EUR", "USD", day("2024-03-04"));
  CHECK(q.rate == dec("1.10"));
  CHECK(q.day == day("2024-01-02"));
  CHECK(q.how == market::FxHow::direct);
  CHECK(view->rate("EUR", "USD", day("2024-03-05")).rate == dec("1.12"));
  CHECK(view->rate("EUR", "USD", day("2024-04-30")).describe() == "EUR/USD 1.12 (2024-03-05)");
  CHECK(error_of([&] { view->rate("EUR", "USD", day("2024-01-01")); }) ==
        "no exchange rate for EUR/USD on or before 2024-01-01 (nor for USD/EUR, nor through a "
        "third currency); import one with 'keel import fx FILE.csv'");
}

TEST_CASE_TEMPLATE("market view: the inverse of a stored pair is derived and says so", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto q = view->rate("USD", "EUR", day("2024-03-04"));
  CHECK(q.how == market::FxHow::inverted);
  CHECK(q.rate == dec("0.909090909091"));  // 1 / 1.10 to 12 places
  CHECK(q.describe() == "USD/EUR 0.909090909091 (2024-01-02, inverted from EUR/USD)");
}

TEST_CASE_TEMPLATE("market view: a cross through one pivot currency, dated by its older leg", V,
                   OneDay, Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto q = view->rate("EUR", "JPY", day("2024-03-04"));
  CHECK(q.how == market::FxHow::crossed);
  CHECK(q.pivot == "USD");
  CHECK(q.rate == dec("165"));  // 1.10 x 150
  CHECK(q.day == day("2024-01-02"));
  CHECK(q.describe() == "EUR/JPY 165 (2024-01-02, crossed through USD)");
  // Converting rounds once, to the target's minor units: JPY has none.
  CHECK(view->convert(dec("10.01"), "EUR", "JPY", day("2024-03-04")) == dec("1652"));
  CHECK(view->convert(dec("1652"), "JPY", "EUR", day("2024-03-04")) == dec("10.01"));
}

TEST_CASE_TEMPLATE("market view: no rate is assumed between currencies without a path", V, OneDay,
                   Preloaded, Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  // GBP/CHF is stored, but nothing links either to the euro.
  CHECK(error_of([&] { view->rate("EUR", "GBP", day("2024-03-04")); }) ==
        "no exchange rate for EUR/GBP on or before 2024-03-04 (nor for GBP/EUR, nor through a "
        "third currency); import one with 'keel import fx FILE.csv'");
  CHECK(error_of([&] { view->convert(dec("5"), "GBP", "EUR", day("2024-03-04")); }) ==
        "no exchange rate for EUR/GBP on or before 2024-03-04 (nor for GBP/EUR, nor through a "
        "third currency); import one with 'keel import fx FILE.csv'");
}

TEST_CASE_TEMPLATE("market view: a currency to itself is 1, and only that", V, OneDay, Preloaded,
                   Repacked, Tailed) {
  MarketLedger m;
  const auto view = V::make(m.db);
  const auto q = view->rate("EUR", "EUR", day("2024-01-01"));  // before any stored rate
  CHECK(q.rate == dec("1"));
  CHECK(q.how == market::FxHow::same);
  CHECK(view->convert(dec("12.345"), "EUR", "EUR", day("2024-01-01")) == dec("12.345"));
}

TEST_CASE("series: a rate of a currency not loaded, or outside the span, is not answered") {
  MarketLedger m;
  market::Series::Request r;
  r.from = day("2024-03-01");
  r.to = day("2024-03-31");
  r.currencies = {"EUR", "USD"};
  const auto s = market::Series::load(m.db, r);
  CHECK(s.rate("EUR", "USD", day("2024-03-04")).rate == dec("1.10"));
  CHECK_THROWS_AS(s.rate("EUR", "JPY", day("2024-03-04")), std::out_of_range);
  CHECK_THROWS_AS(s.rate("EUR", "USD", day("2024-04-01")), std::out_of_range);
}

TEST_CASE("series: the grid's doubles give back the stored decimals exactly") {
  MarketLedger m;
  m.closes({{"AVEL", "2024-05-02", "123456789.123456"}, {"AVEL", "2024-05-03", "0.000001"}});
  market::Series::Request r;
  r.from = day("2024-05-01");
  r.to = day("2024-05-06");
  const auto s = market::Series::load(m.db, r);
  const int c = s.column(m.id("AVEL"));
  CHECK(s.exact(s.row(day("2024-05-01")), c) == dec("11.125"));
  CHECK(s.exact(s.row(day("2024-05-02")), c) == dec("123456789.123456"));
  CHECK(s.value(s.row(day("2024-05-02")), c) == 123456789.123456);
  CHECK(s.exact(s.row(day("2024-05-06")), c) == dec("0.000001"));
  CHECK(s.close_day(s.row(day("2024-05-06")), c) == day("2024-05-03"));
}

TEST_CASE("series: closes too long for a double are kept as decimals") {
  MarketLedger m;
  m.closes({{"AVEL", "2024-05-02", "12345678901.0000000001"}});
  market::Series::Request r;
  r.from = day("2024-05-01");
  r.to = day("2024-05-03");
  const auto s = market::Series::load(m.db, r);
  const int c = s.column(m.id("AVEL"));
  CHECK(s.exact(s.row(day("2024-05-01")), c) == dec("11.125"));
  CHECK(s.exact(s.row(day("2024-05-03")), c) == dec("12345678901.0000000001"));
}

TEST_CASE("series: trading days are the days with any close in the ledger, loaded or not") {
  MarketLedger m;
  market::Series::Request r;
  r.securities = std::vector<std::int64_t>{m.id("AVEL")};
  r.from = day("2024-03-25");
  r.to = day("2024-04-01");
  const auto s = market::Series::load(m.db, r);
  // 03-28 from AVEL and BRISK; 04-01 from AVEL; 04-02 from the fund, unloaded.
  CHECK(s.trading_days() == std::vector<Date>{day("2024-03-28"), day("2024-04-01")});
  CHECK(s.next_trading_day() == day("2024-04-02"));
  CHECK(s.column(m.id("BRISK")) == -1);
  CHECK_THROWS_AS(s.close(m.id("BRISK"), day("2024-03-28")), std::out_of_range);
  CHECK_THROWS_AS(s.close(m.id("AVEL"), day("2024-04-02")), std::out_of_range);
}

TEST_CASE("day view: the latest day with a close, of any security") {
  MarketLedger m;
  market::DayView view(m.db);
  CHECK(view.latest_close_day() == day("2024-04-02"));
  m.closes({{"CALDO", "2024-06-07", "3"}});
  CHECK(view.latest_close_day() == day("2024-06-07"));
  LedgerFixture empty;
  CHECK_FALSE(market::DayView(empty.db).latest_close_day().has_value());
}

TEST_CASE("day view: after the latest close day, every close reads as a fresh view reads it") {
  MarketLedger m;
  m.stock("FALLOW", "Tools");  // no close at all
  market::DayView kept(m.db), fresh(m.db);
  REQUIRE(kept.latest_close_day() == day("2024-04-02"));
  for (const char* symbol : {"AVEL", "BRISK", "CALDO", "DUNMORE", "EVENFUND", "FALLOW"})
    for (Date d = day("2023-12-28"); d <= day("2024-04-05"); d = d.plus_days(1)) {
      CAPTURE(symbol);
      CAPTURE(d.str());
      const auto got = kept.close(m.id(symbol), d);
      const auto want = fresh.close(m.id(symbol), d);
      REQUIRE(got.has_value() == want.has_value());
      if (got) CHECK(*got == *want);
    }
}

TEST_CASE("day view: a latest close that does not parse keeps no closes, and stops only its own") {
  MarketLedger m;
  m.db.sql().exec("INSERT INTO price (security_id, date, close) VALUES (" +
                  std::to_string(m.id("CALDO")) + ", '2024-02-30', '5')");
  market::DayView view(m.db);
  CHECK(view.latest_close_day() == day("2024-04-02"));
  CHECK(view.close(m.id("AVEL"), day("2024-04-05"))->price == dec("11.125"));
  CHECK_THROWS_WITH_AS(view.close(m.id("CALDO"), day("2024-04-05")),
                       "'2024-02-30' is not a calendar date", InputError);
}

TEST_CASE("day view: a latest close dated in another form stops the latest close day, naming it") {
  MarketLedger m;
  m.db.sql().exec("INSERT INTO price (security_id, date, close) VALUES (" +
                  std::to_string(m.id("CALDO")) + ", '2024-5-1', '5')");
  market::DayView view(m.db);
  CHECK_THROWS_WITH_AS(view.latest_close_day(), "'2024-5-1' is not a date in the form YYYY-MM-DD",
                       InputError);
}

TEST_CASE("read transaction: it ends with its scope, so a write transaction can follow") {
  MarketLedger m;
  sqlite3* h = m.db.sql().getHandle();
  {
    store::ReadTransaction snapshot(m.db);
    CHECK(market::DayView(m.db).latest_close_day() == day("2024-04-02"));
    CHECK(sqlite3_get_autocommit(h) == 0);
  }
  CHECK(sqlite3_get_autocommit(h) != 0);
  m.closes({{"CALDO", "2024-06-07", "3"}});  // a write transaction of its own
  CHECK(market::DayView(m.db).latest_close_day() == day("2024-06-07"));
}

TEST_CASE("read transaction: inside a write transaction it leaves that one open") {
  MarketLedger m;
  sqlite3* h = m.db.sql().getHandle();
  store::WriteTransaction tx(m.db);
  { store::ReadTransaction inner(m.db); }
  CHECK(sqlite3_get_autocommit(h) == 0);
  tx.commit();
  CHECK(sqlite3_get_autocommit(h) != 0);
}

TEST_CASE("series: a malformed date stored by other means stops the load, naming it") {
  MarketLedger m;
  m.db.sql().exec("INSERT INTO price (security_id, date, close) VALUES (1, '2024-02-30', '5')");
  market::Series::Request r;
  r.from = day("2024-01-01");
  r.to = day("2024-03-31");
  CHECK_THROWS_WITH_AS(market::Series::load(m.db, r), "'2024-02-30' is not a calendar date",
                       InputError);
}
