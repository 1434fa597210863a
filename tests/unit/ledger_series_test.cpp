// The value-and-flow series built from a ledger: what counts as an external
// flow for one account and for the whole ledger. Every figure is worked out
// by hand in the comments.
#include "perf/ledger_series.h"

#include <doctest/doctest.h>

#include "ledger/action_posting.h"
#include "ledger_fixture.h"
#include "market/series.h"
#include "perf/returns_report.h"
#include "store/price_write.h"

using namespace keel;
using namespace keel::testing;

namespace {

struct SeriesFixture : LedgerFixture {
  std::int64_t id_of(const std::string& symbol) { return store::find_security(db, symbol)->id; }
  std::int64_t account_id(const std::string& name) { return store::account_named(db, name).id; }
  void close(const std::string& symbol, const char* date, const char* price) {
    store::upsert_price(db, id_of(symbol), day(date), dec(price));
  }
  void transfer(const char* date, const std::string& from, const std::string& to,
                std::optional<std::string> symbol, const char* figure) {
    ledger::PostRequest r;
    r.kind = TxnKind::transfer_out;
    r.date = day(date);
    r.account = from;
    r.to_account = to;
    if (symbol) {
      r.symbol = symbol;
      r.quantity = dec(figure);
    } else {
      r.amount = dec(figure);
    }
    ledger::post(db, r);
  }

  // Two accounts; QUILL closes 50 on 01-03 and 55 on 01-04, none later.
  SeriesFixture() {
    account("Alder");
    account("Birch");
    security("QUILL");
    security("MOSS");
    cash(TxnKind::deposit, "2024-01-02", "Alder", "1000");
    cash(TxnKind::deposit, "2024-01-02", "Birch", "500");
    buy("2024-01-03", "Alder", "QUILL", "10", "50", "1");  // Alder cash 1000 - 501 = 499
    close("QUILL", "2024-01-03", "50");
    close("QUILL", "2024-01-04", "55");
    transfer("2024-01-05", "Alder", "Birch", "QUILL", "5");  // 5 x 55 (close of 01-04) = 275
    transfer("2024-01-06", "Alder", "Birch", std::nullopt, "100");
    cash(TxnKind::withdrawal, "2024-01-08", "Birch", "50");
    cash(TxnKind::dividend, "2024-01-08", "Alder", "7", "QUILL");
    cash(TxnKind::tax, "2024-01-08", "Alder", "1", "QUILL");
    cash(TxnKind::fee, "2024-01-08", "Alder", "2");
    cash(TxnKind::interest, "2024-01-08", "Birch", "3");
    // Units brought in from outside, never closed: valued at the transfer's price.
    ledger::PostRequest in;
    in.kind = TxnKind::transfer_in;
    in.date = day("2024-01-09");
    in.account = "Birch";
    in.symbol = "MOSS";
    in.quantity = dec("2");
    in.price = dec("10");
    ledger::post(db, in);
  }

  // The closes and rates of every security and currency over [from, to].
  market::Series prices(const LedgerLog& log, const char* from, const char* to) {
    market::Series::Request span;
    span.from = day(from);
    span.to = day(to);
    span.currencies = perf::currencies_of(log, store::list_securities(db));
    return market::Series::load(db, span);
  }

  perf::LedgerSeries series(std::optional<std::string> account, const char* from, const char* to) {
    const auto log = ledger::load_log(db);
    const auto prices = this->prices(log, day(from).plus_days(-1).str().c_str(), to);
    std::optional<std::int64_t> id;
    if (account) id = account_id(*account);
    return perf::build_series(log, prices, id, day(from), day(to), "USD");
  }
};

struct Expect {
  const char* day;
  const char* value;
  const char* in;
  const char* out;
};

void check_series(const perf::LedgerSeries& s, const std::vector<Expect>& expected) {
  REQUIRE(s.series.size() == expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) {
    INFO("entry " << i << " " << expected[i].day);
    CHECK(s.series[i].day == day(expected[i].day));
    CHECK(s.series[i].value == dec(expected[i].value));
    CHECK(s.series[i].inflow == dec(expected[i].in));
    CHECK(s.series[i].outflow == dec(expected[i].out));
  }
}

}  // namespace

TEST_CASE("whole ledger: deposits and withdrawals are flows, a transfer pair is internal") {
  SeriesFixture f;
  const auto s = f.series(std::nullopt, "2024-01-02", "2024-01-09");
  // Cash 999 after the buy; QUILL 10 units at 50, then 55.
  // 01-08: cash 999 - 50 + 7 - 1 - 2 + 3 = 956; 956 + 550 = 1506, out 50.
  // 01-09: MOSS 2 x 10 = 20 comes in from outside: 1526, in 20.
  check_series(s, {{"2024-01-01", "0", "0", "0"},
                   {"2024-01-02", "1500", "1500", "0"},
                   {"2024-01-03", "1499", "0", "0"},
                   {"2024-01-04", "1549", "0", "0"},
                   {"2024-01-05", "1549", "0", "0"},
                   {"2024-01-06", "1549", "0", "0"},
                   {"2024-01-08", "1506", "0", "50"},
                   {"2024-01-09", "1526", "20", "0"}});
  CHECK(s.income == dec("10"));  // dividend 7 + interest 3
  CHECK(s.tax == dec("1"));
  CHECK(s.fees == dec("3"));  // buy fee 1 + fee 2
  CHECK(s.unpriced.empty());
}

TEST_CASE("one account: both halves of an own-account transfer are flows") {
  SeriesFixture f;
  // Alder: 01-05 sends 5 QUILL valued at the close on or before (55, not the
  // trade price 50): 499 + 5 x 55 = 774, out 275. 01-06 sends 100 cash:
  // 399 + 275 = 674, out 100. 01-08: 399 + 7 - 1 - 2 = 403; 403 + 275 = 678.
  const auto alder = f.series("Alder", "2024-01-02", "2024-01-09");
  check_series(alder, {{"2024-01-01", "0", "0", "0"},
                       {"2024-01-02", "1000", "1000", "0"},
                       {"2024-01-03", "999", "0", "0"},
                       {"2024-01-04", "1049", "0", "0"},
                       {"2024-01-05", "774", "0", "275"},
                       {"2024-01-06", "674", "0", "100"},
                       {"2024-01-08", "678", "0", "0"},
                       {"2024-01-09", "678", "0", "0"}});
  CHECK(alder.income == dec("7"));
  CHECK(alder.tax == dec("1"));
  CHECK(alder.fees == dec("3"));
  // Birch receives the same amounts as inflows.
  const auto birch = f.series("Birch", "2024-01-02", "2024-01-09");
  check_series(birch, {{"2024-01-01", "0", "0", "0"},
                       {"2024-01-02", "500", "500", "0"},
                       {"2024-01-03", "500", "0", "0"},
                       {"2024-01-04", "500", "0", "0"},
                       {"2024-01-05", "775", "275", "0"},
                       {"2024-01-06", "875", "100", "0"},
                       {"2024-01-08", "828", "0", "50"},
                       {"2024-01-09", "848", "20", "0"}});
  CHECK(birch.income == dec("3"));
}

TEST_CASE("a later start: the opening entry is the day before, totals only inside") {
  SeriesFixture f;
  const auto s = f.series(std::nullopt, "2024-01-06", "2024-01-08");
  check_series(s, {{"2024-01-05", "1549", "0", "0"},
                   {"2024-01-06", "1549", "0", "0"},
                   {"2024-01-08", "1506", "0", "50"}});
  CHECK(s.income == dec("10"));
  CHECK(s.fees == dec("2"));  // the buy's fee lies before the period
}

TEST_CASE("a security transfer without any close is valued at the last trade price") {
  SeriesFixture f;
  // FERN has no close at all: the transfer and the position fall back to
  // the last trade price, 40.
  f.security("FERN");
  f.buy("2024-01-10", "Alder", "FERN", "2", "40");
  f.transfer("2024-01-11", "Alder", "Birch", "FERN", "1");
  const auto alder = f.series("Alder", "2024-01-11", "2024-01-11");
  REQUIRE(alder.series.size() == 2);
  CHECK(alder.series[1].outflow == dec("40"));
  // Alder after 01-10: 403 - 80 = 323 cash, 5 QUILL x 55, 1 FERN x 40.
  CHECK(alder.series[1].value == dec("638"));
}

TEST_CASE("a period that ends before it starts is refused") {
  SeriesFixture f;
  CHECK_THROWS_AS(f.series(std::nullopt, "2024-01-05", "2024-01-04"), InputError);
}

TEST_CASE("a slice of a longer series measures like the series built for its period") {
  SeriesFixture f;
  // 01-07 is a Sunday with no entry: the slice opens on 01-06's, whose value
  // is the one the direct build gives 01-07.
  const auto whole = f.series(std::nullopt, "2024-01-02", "2024-01-09");
  const auto part = perf::slice(whole, day("2024-01-08"), day("2024-01-09"));
  check_series(part, {{"2024-01-06", "1549", "0", "0"},
                      {"2024-01-08", "1506", "0", "50"},
                      {"2024-01-09", "1526", "20", "0"}});
  const auto direct = f.series(std::nullopt, "2024-01-08", "2024-01-09");
  CHECK(direct.series.front().value == part.series.front().value);
  CHECK(part.income == direct.income);
  CHECK(part.tax == direct.tax);
  CHECK(part.fees == direct.fees);
  CHECK(part.fees == dec("2"));  // the buy's fee of 01-03 lies before the slice
}

TEST_CASE("a slice lists a security without a price only on its own days") {
  SeriesFixture f;
  f.security("FERN");
  // QUILL spins off FERN on 01-10, one for one; FERN has no price until its
  // first close on 01-12.
  ledger::ActionRequest spin;
  spin.kind = ActionKind::spinoff;
  spin.date = day("2024-01-10");
  spin.symbol = "QUILL";
  spin.target = "FERN";
  spin.ratio = dec("1");
  spin.cost_percent = dec("10");
  ledger::post_action(f.db, spin);
  f.close("FERN", "2024-01-12", "3");
  const auto whole = f.series(std::nullopt, "2024-01-02", "2024-01-15");
  CHECK(whole.unpriced.size() == 1);
  CHECK(perf::slice(whole, day("2024-01-02"), day("2024-01-09")).unpriced.empty());
  CHECK(perf::slice(whole, day("2024-01-11"), day("2024-01-11")).unpriced.size() == 1);
  CHECK(perf::slice(whole, day("2024-01-13"), day("2024-01-15")).unpriced.empty());
}

TEST_CASE("a slice outside the series built is refused") {
  SeriesFixture f;
  const auto whole = f.series(std::nullopt, "2024-01-04", "2024-01-09");
  CHECK_THROWS_AS(perf::slice(whole, day("2024-01-03"), day("2024-01-09")), std::invalid_argument);
}

TEST_CASE("returns of several periods measured together equal each measured alone") {
  SeriesFixture f;
  const auto data = perf::LedgerData::load(f.db);
  std::vector<perf::ReturnsRequest> requests(3);
  requests[0].period.from = day("2024-01-02");
  requests[1].period.from = day("2024-01-06");
  requests[1].period.to = day("2024-01-08");
  requests[2].period.from = day("2024-01-08");
  const auto together = perf::returns_reports(f.db, data, std::nullopt, requests).reports;
  REQUIRE(together.size() == 3);
  for (std::size_t i = 0; i < requests.size(); ++i) {
    INFO("request " << i);
    const auto alone = perf::returns_report(f.db, data, requests[i]);
    CHECK(together[i].period.from == alone.period.from);
    CHECK(together[i].result.twr.period == alone.result.twr.period);
    CHECK(together[i].result.closing_value == alone.result.closing_value);
    CHECK(together[i].income == alone.income);
    CHECK(together[i].fees == alone.fees);
  }
}

TEST_CASE("local returns: one per account, each that account's own report") {
  SeriesFixture f;
  perf::ReturnsRequest request;
  request.period.from = day("2024-01-02");
  request.local = true;
  const auto household = perf::returns_report(f.db, request);
  REQUIRE(household.local.size() == 2);
  for (const auto& local : household.local) {
    INFO(local.account);
    perf::ReturnsRequest own;
    own.period.from = day("2024-01-02");
    own.account = local.account;
    const auto alone = perf::returns_report(f.db, own);
    CHECK(local.currency == alone.currency);
    CHECK(local.result.opening_value == alone.result.opening_value);
    CHECK(local.result.closing_value == alone.result.closing_value);
    CHECK(local.result.inflow == alone.result.inflow);
    CHECK(local.result.twr.period == alone.result.twr.period);
    CHECK(alone.local.empty());
  }
  CHECK(household.local[0].account == "Alder");
  CHECK(household.local[1].account == "Birch");
  // Alder's transfers to Birch (5 QUILL at 55, and 100) are flows of Alder alone.
  CHECK(household.local[0].result.outflow == dec("375"));
  CHECK(household.result.outflow == dec("50"));
}

TEST_CASE("local returns: one account gives only its own row") {
  SeriesFixture f;
  perf::ReturnsRequest request;
  request.period.from = day("2024-01-02");
  request.account = "Birch";
  request.local = true;
  const auto report = perf::returns_report(f.db, request);
  REQUIRE(report.local.size() == 1);
  CHECK(report.local[0].account == "Birch");
  CHECK(report.local[0].result.closing_value == report.result.closing_value);
}

TEST_CASE("the books kept on the way hold what a replay to each day holds; the last is whole") {
  SeriesFixture f;
  const auto log = ledger::load_log(f.db);
  const auto prices = f.prices(log, "2024-01-02", "2024-01-10");
  // 01-07 has no entry of its own (a Sunday without closes); 01-12 lies past the span.
  const std::vector<Date> days{day("2024-01-02"), day("2024-01-04"), day("2024-01-07"),
                               day("2024-01-12")};
  const auto built = perf::build_series(log, prices, f.account_id("Birch"), day("2024-01-03"),
                                        day("2024-01-10"), "USD", days);
  REQUIRE(built.books.size() == days.size());
  for (std::size_t i = 0; i < days.size(); ++i) {
    INFO("day " << days[i].str());
    const Book alone = replay(log, days[i]);
    for (const auto& a : alone.accounts()) {
      CHECK(built.books[i].account(a.id).cash == alone.account(a.id).cash);
      CHECK(built.books[i].account(a.id).positions.size() == alone.account(a.id).positions.size());
    }
    // The books before the last are holdings copies: no history of moves.
    const bool last = i + 1 == days.size();
    CHECK(built.books[i].moved().size() == (last ? alone.moved().size() : 0));
  }
  CHECK(!built.books.back().moved().empty());
  // Alder bought 10 QUILL on 01-03 and sent 5 away on 01-05.
  const auto alder = f.account_id("Alder");
  CHECK(built.books[1].account(alder).positions.at(f.id_of("QUILL")).quantity() == dec("10"));
  CHECK(built.books[2].account(alder).positions.at(f.id_of("QUILL")).quantity() == dec("5"));
}

TEST_CASE("book days before the day before the period are refused") {
  SeriesFixture f;
  const auto log = ledger::load_log(f.db);
  const auto prices = f.prices(log, "2024-01-03", "2024-01-10");
  CHECK_THROWS_AS(perf::build_series(log, prices, std::nullopt, day("2024-01-04"),
                                     day("2024-01-10"), "USD", {day("2024-01-02")}),
                  std::invalid_argument);
  CHECK_THROWS_AS(
      perf::build_series(log, prices, std::nullopt, day("2024-01-04"), day("2024-01-10"), "USD",
                         {day("2024-01-06"), day("2024-01-05")}),
      std::invalid_argument);
}

TEST_CASE("a day's value stays exact when its holdings' products overflow machine integers") {
  LedgerFixture f;
  f.account("Alder");
  f.security("VAST");
  f.security("MITE");
  auto bring = [&](const char* symbol, const char* quantity) {
    ledger::PostRequest in;
    in.kind = TxnKind::transfer_in;
    in.date = day("2024-01-02");
    in.account = "Alder";
    in.symbol = symbol;
    in.quantity = dec(quantity);
    in.price = dec("1");
    ledger::post(f.db, in);
  };
  bring("VAST", "100000000000000000");
  bring("MITE", "0.0000000001");
  const auto id = [&](const char* s) { return store::find_security(f.db, s)->id; };
  store::upsert_price(f.db, id("VAST"), day("2024-01-03"), dec("999999999999999"));
  store::upsert_price(f.db, id("MITE"), day("2024-01-03"), dec("3.5"));
  const auto log = ledger::load_log(f.db);
  market::Series::Request span;
  span.from = day("2024-01-02");
  span.to = day("2024-01-03");
  const auto prices = market::Series::load(f.db, span);
  const auto s =
      perf::build_series(log, prices, std::nullopt, day("2024-01-03"), day("2024-01-03"), "USD");
  // 10^17 x 999999999999999 + 10^-10 x 3.5: 32 digits before the point and 11
  // after do not fit one 128-bit integer.
  REQUIRE(s.series.size() == 2);
  CHECK(s.series.back().value == dec("99999999999999900000000000000000.00000000035"));
}
