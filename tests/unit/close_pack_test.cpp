// Close packs (market/close_pack.h, migration 0011): the bytes round-trip
// exactly, damage is refused, and a pack never answers for closes that have
// changed since it was kept. Closes are invented.
#include "market/close_pack.h"

#include <doctest/doctest.h>

#include <string>
#include <tuple>
#include <vector>

#include "ledger_fixture.h"
#include "market/series.h"
#include "store/fingerprint.h"
#include "store/market_data.h"
#include "store/market_rows.h"
#include "test_files.h"

using namespace keel;
using namespace keel::testing;
using market::PackedClose;

namespace {

int packs(store::Database& db) {
  return db.sql().execAndGet("SELECT count(*) FROM close_pack").getInt();
}
std::string last_day(store::Database& db, std::int64_t id) {
  SQLite::Statement st(db.sql(), "SELECT last_day FROM close_pack WHERE security_id = ?");
  st.bind(1, static_cast<std::int64_t>(id));
  return st.executeStep() ? st.getColumn(0).getString() : "(no pack)";
}
bool packed(store::Database& db, std::int64_t id) {
  SQLite::Statement st(db.sql(), "SELECT count(*) FROM close_pack WHERE security_id = ?");
  st.bind(1, static_cast<std::int64_t>(id));
  st.executeStep();
  return st.getColumn(0).getInt() == 1;
}

// `n` closes of `symbol` on consecutive days from `first`: 4 + i mod 7.
std::vector<std::tuple<std::string, std::string, std::string>> daily(const char* symbol,
                                                                     const char* first, int n) {
  std::vector<std::tuple<std::string, std::string, std::string>> rows;
  for (int i = 0; i < n; ++i)
    rows.emplace_back(symbol, day(first).plus_days(i).str(), std::to_string(4 + i % 7));
  return rows;
}

// Everything a Series answers about closes, as text, to compare two loads.
std::string closes_of(const market::Series& s) {
  std::string out;
  for (int c = 0; c < s.columns(); ++c)
    for (const auto& close : s.closes(s.security_id(c)))
      out += std::to_string(s.security_id(c)) + " " + close.day.str() + " " + close.price.str() +
             " places " + std::to_string(s.price_places(c)) + "\n";
  for (const Date d : s.trading_days()) out += "trading " + d.str() + "\n";
  if (const auto next = s.next_trading_day()) out += "next " + next->str() + "\n";
  return out;
}

market::Series load(store::Database& db, std::optional<std::vector<std::int64_t>> ids = {}) {
  market::Series::Request r;
  r.securities = std::move(ids);
  r.from = day("2024-03-01");
  r.to = day("2024-03-31");
  return market::Series::load(db, r);
}

struct Closes : LedgerFixture {
  Closes() {
    for (const char* symbol : {"ARBOR", "BELLWAY", "CORVEN"}) {
      Security s;
      s.symbol = symbol;
      s.name = std::string(symbol) + " (invented)";
      s.currency = "USD";
      store::insert_security(db, s);
    }
    closes({{"ARBOR", "2024-02-28", "9.5"},
            {"ARBOR", "2024-03-01", "10.25"},
            {"ARBOR", "2024-03-04", "10.5"},
            {"ARBOR", "2024-04-02", "11"},
            {"BELLWAY", "2024-03-05", "40"},
            {"BELLWAY", "2024-03-28", "41.125"},
            {"CORVEN", "2024-03-12", "3.3"}});
  }
  std::int64_t id(const char* symbol) { return store::security_with_symbol(db, symbol).id; }
};

}  // namespace

TEST_CASE("close packs: closes come back exactly from their pack") {
  const std::vector<PackedClose> closes{
      {day("1969-12-30"), 1, 0},                  // before 1970: a negative day number
      {day("1970-01-02"), 123456789012345, 6},    // a long mantissa
      {day("2024-03-01"), 1125899906842623, 15},  // the largest kept: 2^50 - 1, scale 15
      {day("2024-03-04"), 7, 1},                  // a fall of nearly everything
      {day("2090-12-31"), 0, 0}};
  std::vector<PackedClose> back;
  REQUIRE(market::unpack_closes(market::pack_closes(closes), back));
  CHECK(back == closes);
  REQUIRE(market::unpack_closes(market::pack_closes({}), back));
  CHECK(back.empty());
}

TEST_CASE("close packs: damaged bytes are refused, not read") {
  const std::string good =
      market::pack_closes({{day("2024-03-01"), 1025, 2}, {day("2024-03-04"), 1050, 2}});
  std::vector<PackedClose> back;
  CHECK_FALSE(market::unpack_closes("", back));
  CHECK_FALSE(market::unpack_closes(good.substr(0, good.size() - 1), back));  // cut short
  CHECK_FALSE(market::unpack_closes(good + '\x01', back));                    // bytes after it
  CHECK_FALSE(market::unpack_closes('\x02' + good.substr(1), back));          // another version
  CHECK_FALSE(market::unpack_closes(market::kUnpackable, back));
  // Two closes, the second 2^62 days after the first: refused before any arithmetic.
  std::string far{'\x01', '\x02', '\x00', '\x00'};
  far.append(8, '\x80');
  far += "\x40";
  far.push_back('\x00');
  CHECK_FALSE(market::unpack_closes(far, back));
}

TEST_CASE("close packs: only canonical decimals within the exact limits are packed") {
  std::int64_t m = 0;
  int scale = 0;
  CHECK(market::plain_close("123.45", m, scale));
  CHECK((m == 12345 && scale == 2));
  CHECK(market::plain_close("40", m, scale));
  CHECK((m == 40 && scale == 0));
  CHECK(market::plain_close("1125899906842623", m, scale));  // 2^50 - 1
  for (const char* refused : {"", "-1", "1e5", ".5", "5.", "1.2.3", "1125899906842624",
                              "0.1234567890123456", "1234567890123456789"})
    CHECK_MESSAGE(!market::plain_close(refused, m, scale), refused);
}

TEST_CASE("close packs: a load keeps a pack per security, and the next load answers the same") {
  Closes m;
  REQUIRE(packs(m.db) == 0);
  const std::string first = closes_of(load(m.db));
  CHECK(packs(m.db) == 3);
  CHECK(closes_of(load(m.db)) == first);
  CHECK(first ==
        "1 2024-03-01 10.25 places 2\n1 2024-03-04 10.5 places 2\n"
        "2 2024-03-05 40 places 3\n2 2024-03-28 41.125 places 3\n"
        "3 2024-03-12 3.3 places 1\n"
        "trading 2024-03-01\ntrading 2024-03-04\ntrading 2024-03-05\ntrading 2024-03-12\n"
        "trading 2024-03-28\nnext 2024-04-02\n");
}

TEST_CASE("close packs: a security not loaded gives the trading days from its pack too") {
  Closes m;
  load(m.db);
  const auto s = load(m.db, std::vector<std::int64_t>{m.id("CORVEN")});
  CHECK(closes_of(s) ==
        "3 2024-03-12 3.3 places 1\n"
        "trading 2024-03-01\ntrading 2024-03-04\ntrading 2024-03-05\ntrading 2024-03-12\n"
        "trading 2024-03-28\nnext 2024-04-02\n");
}

TEST_CASE("close packs: a close between packed ones drops its security's pack") {
  Closes m;
  load(m.db);
  m.closes({{"BELLWAY", "2024-03-15", "40.5"}});
  CHECK_FALSE(packed(m.db, m.id("BELLWAY")));
  CHECK(packed(m.db, m.id("ARBOR")));
  const auto s = load(m.db);
  CHECK(s.close(m.id("BELLWAY"), day("2024-03-18"))->price == dec("40.5"));
  CHECK(packed(m.db, m.id("BELLWAY")));
}

TEST_CASE("close packs: a close after the last one packed keeps the pack, and loads merge it") {
  Closes m;
  load(m.db);
  m.closes({{"BELLWAY", "2024-03-29", "42"}});
  CHECK(last_day(m.db, m.id("BELLWAY")) == "2024-03-28");
  const auto s = load(m.db);
  CHECK(s.close(m.id("BELLWAY"), day("2024-03-30")) == market::Close{day("2024-03-29"), dec("42")});
  CHECK(s.trading_days().back() == day("2024-03-29"));
  // A short tail stays a tail: the pack is not written again.
  CHECK(last_day(m.db, m.id("BELLWAY")) == "2024-03-28");
  m.closes({{"BELLWAY", "2024-03-01", "39"}});  // before the tail: the pack goes
  CHECK_FALSE(packed(m.db, m.id("BELLWAY")));
  CHECK(load(m.db).close(m.id("BELLWAY"), day("2024-03-04"))->price == dec("39"));
}

TEST_CASE("close packs: a replaced close drops the pack, and the next load has the new one") {
  Closes m;
  load(m.db);
  m.closes({{"ARBOR", "2024-03-04", "10.75"}}, true);
  CHECK_FALSE(packed(m.db, m.id("ARBOR")));
  CHECK(load(m.db).close(m.id("ARBOR"), day("2024-03-05"))->price == dec("10.75"));
}

TEST_CASE("close packs: an appended close, then an older one replaced, drops the pack") {
  Closes m;
  load(m.db);
  m.closes({{"CORVEN", "2024-03-13", "3.4"}});
  REQUIRE(packed(m.db, m.id("CORVEN")));
  m.closes({{"CORVEN", "2024-03-12", "3.25"}}, true);
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));
  const auto s = load(m.db);
  CHECK(s.close(m.id("CORVEN"), day("2024-03-12"))->price == dec("3.25"));
  CHECK(s.close(m.id("CORVEN"), day("2024-03-14"))->price == dec("3.4"));
  CHECK(last_day(m.db, m.id("CORVEN")) == "2024-03-13");
}

TEST_CASE("close packs: a close of the tail replaced or deleted keeps the pack, loads follow it") {
  Closes m;
  load(m.db);
  m.closes({{"CORVEN", "2024-03-13", "3.4"}, {"CORVEN", "2024-03-14", "3.5"}});
  m.closes({{"CORVEN", "2024-03-14", "3.6"}}, true);
  CHECK(packed(m.db, m.id("CORVEN")));
  CHECK(load(m.db).close(m.id("CORVEN"), day("2024-03-15"))->price == dec("3.6"));
  m.db.sql().exec("DELETE FROM price WHERE security_id = 3 AND date = '2024-03-14'");
  CHECK(packed(m.db, m.id("CORVEN")));
  CHECK(load(m.db).close(m.id("CORVEN"), day("2024-03-15"))->price == dec("3.4"));
}

TEST_CASE("close packs: the triggers keep a pack for rows after its last day only") {
  Closes m;
  load(m.db);
  auto& sql = m.db.sql();
  sql.exec("INSERT INTO price (security_id, date, close) VALUES (3, '2024-03-13', '3.4')");
  sql.exec("UPDATE price SET close = '3.45' WHERE security_id = 3 AND date = '2024-03-13'");
  CHECK(packed(m.db, m.id("CORVEN")));
  CHECK(load(m.db).close(m.id("CORVEN"), day("2024-03-14"))->price == dec("3.45"));
  sql.exec("UPDATE price SET date = '2024-03-11' WHERE security_id = 3 AND date = '2024-03-13'");
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));  // moved into the packed days
  load(m.db);
  REQUIRE(last_day(m.db, m.id("CORVEN")) == "2024-03-12");
  sql.exec("INSERT INTO price (security_id, date, close) VALUES (3, '2024-03-05', '3')");
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));  // between packed days
  CHECK(load(m.db).close(m.id("CORVEN"), day("2024-03-06"))->price == dec("3"));
}

TEST_CASE("close packs: a bulk import of later closes keeps the pack, and a long tail is packed") {
  Closes m;
  load(m.db);
  // Enough rows after the stored ones for the importer's multi-row insert,
  // which runs with triggers off and drops the packs itself.
  m.closes(daily("CORVEN", "2024-04-01", 600));
  CHECK(last_day(m.db, m.id("CORVEN")) == "2024-03-12");
  CHECK(packed(m.db, m.id("ARBOR")));
  market::Series::Request r;
  r.from = day("2024-03-01");
  r.to = day("2025-12-31");
  // The last row: 2025-11-21, close 4 + 599 mod 7.
  CHECK(market::Series::load(m.db, r).close(m.id("CORVEN"), day("2025-11-22"))->price == dec("8"));
  // 600 closes after the pack, more than market::kPackTailLimit: packed again.
  CHECK(last_day(m.db, m.id("CORVEN")) == "2025-11-21");
  m.db.sql().exec("UPDATE price SET close = '5' WHERE security_id = 3 AND date = '2024-04-01'");
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));
}

TEST_CASE("close packs: a bulk import that reaches back into a pack drops it") {
  Closes m;
  load(m.db);
  m.closes(daily("CORVEN", "2024-03-11", 600), true);
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));
  CHECK(packed(m.db, m.id("ARBOR")));
  CHECK(load(m.db).close(m.id("CORVEN"), day("2024-03-12"))->price == dec("5"));
}

TEST_CASE("close packs: a tail just short of the limit is merged, one more packs it again") {
  Closes m;
  load(m.db);
  std::vector<std::tuple<std::string, std::string, std::string>> rows;
  for (std::size_t i = 0; i + 1 < market::kPackTailLimit; ++i)
    rows.emplace_back("ARBOR", day("2024-04-03").plus_days(static_cast<int>(i)).str(), "12");
  m.closes(rows);
  const std::string merged = closes_of(load(m.db));
  CHECK(last_day(m.db, m.id("ARBOR")) == "2024-04-02");
  m.closes({{"ARBOR", "2024-12-31", "13"}});
  load(m.db);
  CHECK(last_day(m.db, m.id("ARBOR")) == "2024-12-31");
  CHECK(closes_of(load(m.db)) == merged);  // the span's answers, from the new pack
}

TEST_CASE("close packs: closes changed or deleted by other means drop the pack too") {
  Closes m;
  load(m.db);
  m.db.sql().exec("UPDATE price SET close = '12' WHERE date = '2024-03-01'");
  CHECK_FALSE(packed(m.db, m.id("ARBOR")));
  CHECK(load(m.db).close(m.id("ARBOR"), day("2024-03-01"))->price == dec("12"));
  m.db.sql().exec("DELETE FROM price WHERE date = '2024-03-12'");
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));
  CHECK_FALSE(load(m.db).close(m.id("CORVEN"), day("2024-03-31")).has_value());
  m.db.sql().exec("INSERT INTO price (security_id, date, close) VALUES (3, '2024-03-13', '3.5')");
  CHECK_FALSE(packed(m.db, m.id("CORVEN")));
  CHECK(load(m.db).close(m.id("CORVEN"), day("2024-03-31"))->price == dec("3.5"));
}

TEST_CASE("close packs: a damaged pack is read from the rows and packed again") {
  Closes m;
  const std::string first = closes_of(load(m.db));
  m.db.sql().exec("UPDATE close_pack SET packed = x'01ff' WHERE security_id = 2");
  CHECK(closes_of(load(m.db)) == first);
  CHECK(closes_of(load(m.db)) == first);
}

TEST_CASE("close packs: a close too long for a pack is read from the rows every time") {
  Closes m;
  m.closes({{"BELLWAY", "2024-03-20", "12345678901.0000000001"}});
  const std::string first = closes_of(load(m.db));
  {
    SQLite::Statement st(m.db.sql(), "SELECT packed FROM close_pack WHERE security_id = 2");
    REQUIRE(st.executeStep());
    CHECK(st.getColumn(0).getString() == market::kUnpackable);
  }
  CHECK(closes_of(load(m.db)) == first);
  CHECK(load(m.db).close(m.id("BELLWAY"), day("2024-03-21"))->price ==
        dec("12345678901.0000000001"));
}

TEST_CASE("close packs: none are kept when another connection changed the ledger meanwhile") {
  test::TempDir dir;
  const auto path = dir.path() / "keel.db";
  auto db = store::Database::open(path, {store::Access::create});
  auto other = store::Database::open(path);
  const std::int64_t since = store::change_count(db);
  other.sql().exec("CREATE TEMP TABLE scratch (x)");  // no commit to the file
  CHECK(store::change_count(db) == since);
  other.sql().exec(
      "INSERT INTO security (symbol, name, kind, currency, lot_size) "
      "VALUES ('DOVETAIL', 'Dovetail (invented)', 'stock', 'USD', '1')");
  CHECK_FALSE(store::keep_close_packs(db, {{1, "", market::pack_closes({})}}, since));
  CHECK(packs(db) == 0);
  CHECK(store::keep_close_packs(db, {{1, "", market::pack_closes({})}}, store::change_count(db)));
  CHECK(packs(db) == 1);
}

TEST_CASE("close packs: a ledger busy with another writer is loaded without keeping packs") {
  test::TempDir dir;
  const auto path = dir.path() / "keel.db";
  {
    auto db = store::Database::open(path, {store::Access::create});
    db.sql().exec(
        "INSERT INTO security (symbol, name, kind, currency, lot_size) "
        "VALUES ('DOVETAIL', 'Dovetail (invented)', 'stock', 'USD', '1')");
    db.sql().exec("INSERT INTO price (security_id, date, close) VALUES (1, '2024-03-04', '8')");
  }
  auto writer = store::Database::open(path);
  store::WriteTransaction busy(writer);
  store::OpenOptions o;
  o.access = store::Access::read;
  o.busy_timeout_ms = 0;
  auto db = store::Database::open(path, o);
  CHECK(load(db).close(1, day("2024-03-05"))->price == dec("8"));
  CHECK(packs(db) == 0);
}

TEST_CASE("content dump: close packs are derived data and left out") {
  Closes m;
  const std::string before = store::content_dump(m.db);
  load(m.db);
  REQUIRE(packs(m.db) == 3);
  CHECK(store::content_dump(m.db) == before);
}
