// Market data import: all or nothing, exactly once, located errors, and the
// point-in-time view of metrics.
#include <doctest/doctest.h>

#include <string>
#include <tuple>
#include <vector>

#include "core/error.h"
#include "io/errors.h"
#include "io/market_intake.h"
#include "io/sha256.h"
#include "market/day_view.h"
#include "store/fingerprint.h"
#include "store/ledger_store.h"
#include "store/market_data.h"
#include "test_files.h"

using keel::Date;
using keel::Decimal;
using keel::io::import_market;
using keel::io::ImportOptions;
using keel::io::ImportRefused;
using keel::io::MarketKind;
using keel::store::Database;

namespace {

const char* kSecurities =
    "symbol,name,kind,currency,lot_size,sector\n"
    "QRX,\"Quarix Holdings, Inc.\",stock,USD,1,Tools\n"
    "VLM,Velmora Fund,fund,EUR,0.001,\n";

struct Ledger {
  keel::test::TempDir dir;
  Database db = Database::in_memory();
  Ledger() { import("securities.csv", MarketKind::securities, kSecurities); }
  keel::io::ImportSummary import(const std::string& name, MarketKind what, const std::string& text,
                                 ImportOptions options = {}) {
    return import_market(db, what, dir.write(name, text), options);
  }
  // Runs an import expected to fail; returns its error lines and checks the
  // ledger is byte-for-byte what it was.
  std::vector<std::string> refused(const std::string& name, MarketKind what,
                                   const std::string& text, ImportOptions options = {}) {
    const std::string before = keel::store::content_dump(db);
    std::vector<std::string> lines;
    try {
      import(name, what, text, options);
      FAIL("import was accepted");
    } catch (const ImportRefused& e) {
      lines = e.lines();
    }
    CHECK(keel::store::content_dump(db) == before);
    return lines;
  }
  std::string path(const std::string& name) const { return (dir.path() / name).string(); }
};

std::string prices_csv(const std::string& rows) {
  return "date,symbol,close\n" + rows;
}

}  // namespace

TEST_CASE("prices import adds every row and records the run with the file's SHA-256") {
  Ledger l;
  const std::string text = prices_csv("2024-01-02,QRX,10.50\n2024-01-02,VLM,99.0\n");
  const auto sum = l.import("p.csv", MarketKind::prices, text);
  CHECK(sum.rows == 2);
  CHECK(sum.added == 2);
  REQUIRE(sum.run_id);
  const auto runs = keel::store::list_import_runs(l.db);
  REQUIRE(runs.size() == 2);
  CHECK(runs[1].what == "prices");
  CHECK(runs[1].file_sha256 == keel::io::sha256_hex(text));
  CHECK(runs[1].rows_added == 2);
  const auto qrx = keel::store::security_with_symbol(l.db, "QRX");
  CHECK(keel::market::DayView(l.db).close(qrx.id, Date::parse("2024-01-05"))->price ==
        Decimal::parse("10.5"));
}

TEST_CASE("re-importing the same prices adds nothing and records no run") {
  Ledger l;
  const std::string text = prices_csv("2024-01-02,QRX,10.5\n2024-01-03,QRX,10.6\n");
  l.import("p.csv", MarketKind::prices, text);
  const std::string before = keel::store::content_dump(l.db);
  const auto again = l.import("p.csv", MarketKind::prices, text);
  CHECK(again.added == 0);
  CHECK(again.unchanged == 2);
  CHECK_FALSE(again.run_id);
  REQUIRE(again.same_file_before);
  CHECK(keel::store::content_dump(l.db) == before);
}

TEST_CASE("a bad date is refused with file, line and column, and nothing is written") {
  Ledger l;
  const auto lines =
      l.refused("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n2024-02-30,QRX,2\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == l.path("p.csv") + ":3: column 'date': 2024-02-30 is not a day of the calendar");
}

TEST_CASE("a non-numeric close is refused and nothing is written") {
  Ledger l;
  const auto lines = l.refused("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1O.5\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == l.path("p.csv") +
                        ":2: column 'close': '1O.5' is not a decimal number: unexpected "
                        "character 'O'");
}

TEST_CASE("a negative close is refused and nothing is written") {
  Ledger l;
  const auto lines = l.refused("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,-3\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == l.path("p.csv") + ":2: column 'close': -3 must not be negative");
}

TEST_CASE("an unknown symbol is refused and nothing is written") {
  Ledger l;
  const auto lines =
      l.refused("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n2024-01-02,NOPE,2\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] ==
        l.path("p.csv") + ":3: column 'symbol': unknown security 'NOPE'; import or add it first");
}

TEST_CASE("a key repeated inside the file is refused even with the same value") {
  Ledger l;
  const auto lines =
      l.refused("p.csv", MarketKind::prices,
                prices_csv("2024-01-02,QRX,1\n2024-01-03,QRX,2\n2024-01-02,QRX,1\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] ==
        l.path("p.csv") + ":4: QRX on 2024-01-02 appears on an earlier line of this file");
}

TEST_CASE("a key repeated inside a re-imported file is refused too") {
  Ledger l;
  l.import("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n2024-01-03,QRX,2\n"));
  const auto lines =
      l.refused("q.csv", MarketKind::prices,
                prices_csv("2024-01-03,QRX,2\n2024-01-02,QRX,1\n2024-01-03,QRX,2\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] ==
        l.path("q.csv") + ":4: QRX on 2024-01-03 appears on an earlier line of this file");
}

TEST_CASE("a value conflicting with the ledger is refused without --replace") {
  Ledger l;
  l.import("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n"));
  const auto lines = l.refused("q.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1.5\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] == l.path("q.csv") +
                        ":2: column 'close': QRX on 2024-01-02: the ledger already has close 1; "
                        "use --replace to overwrite it");
}

TEST_CASE("--replace overwrites a conflicting value and counts it") {
  Ledger l;
  l.import("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n"));
  ImportOptions o;
  o.replace = true;
  const auto sum = l.import("q.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1.5\n"), o);
  CHECK(sum.replaced == 1);
  const auto qrx = keel::store::security_with_symbol(l.db, "QRX");
  CHECK(keel::market::DayView(l.db).close(qrx.id, Date::parse("2024-01-02"))->price ==
        Decimal::parse("1.5"));
}

TEST_CASE("--dry-run reports what would be added and changes nothing") {
  Ledger l;
  const std::string before = keel::store::content_dump(l.db);
  ImportOptions o;
  o.dry_run = true;
  const auto sum =
      l.import("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n2024-01-03,QRX,2\n"), o);
  CHECK(sum.added == 2);
  CHECK(sum.dry_run);
  CHECK(keel::store::content_dump(l.db) == before);
}

TEST_CASE("errors are collected across the file, up to 50, then reading stops") {
  Ledger l;
  std::string rows;
  for (int i = 0; i < 80; ++i) rows += "2024-01-02,QRX,x\n";
  const auto lines = l.refused("p.csv", MarketKind::prices, prices_csv(rows));
  CHECK(lines.size() == 50);
  CHECK(lines[49].rfind(l.path("p.csv") + ":51:", 0) == 0);
}

TEST_CASE("a CSV syntax error names the line and the column") {
  Ledger l;
  const auto lines = l.refused("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,\"1\"2\n"));
  REQUIRE(lines.size() == 1);
  CHECK(lines[0].rfind(l.path("p.csv") + ":2: column 'close': unexpected text after a closing",
                       0) == 0);
}

TEST_CASE("an unknown header is refused before any row is read") {
  Ledger l;
  const auto lines =
      l.refused("p.csv", MarketKind::prices, "date,symbol,close,volume\n2024-01-02,QRX,1,5\n");
  REQUIRE(lines.size() == 1);
  CHECK(lines[0].rfind(l.path("p.csv") + ":1: column 'volume': unknown column", 0) == 0);
}

TEST_CASE("prices imported in any order of rows read back the same") {
  Ledger a, b;
  a.import("p.csv", MarketKind::prices,
           prices_csv("2024-01-03,VLM,3\n2024-01-02,QRX,1\n2024-01-02,VLM,2\n2024-01-03,QRX,4\n"));
  b.import("p.csv", MarketKind::prices,
           prices_csv("2024-01-02,QRX,1\n2024-01-03,QRX,4\n2024-01-02,VLM,2\n2024-01-03,VLM,3\n"));
  std::string xa, xb;
  keel::store::for_each_price(a.db,
                              [&](const std::string& s, std::string_view d, std::string_view c) {
                                xa += s + std::string(d) + std::string(c);
                              });
  keel::store::for_each_price(b.db,
                              [&](const std::string& s, std::string_view d, std::string_view c) {
                                xb += s + std::string(d) + std::string(c);
                              });
  CHECK(xa == xb);
  CHECK_FALSE(xa.empty());
}

TEST_CASE("a known_on before the period date is refused") {
  Ledger l;
  const auto lines = l.refused("m.csv", MarketKind::metrics,
                               "date,symbol,metric,value,known_on\n"
                               "2024-03-31,QRX,book_per_share,4.2,2024-03-30\n");
  REQUIRE(lines.size() == 1);
  CHECK(lines[0].rfind(l.path("m.csv") + ":2: column 'known_on': 2024-03-30 is before the period",
                       0) == 0);
}

TEST_CASE("known_on defaults to the period date") {
  Ledger l;
  l.import("m.csv", MarketKind::metrics, "date,symbol,metric,value\n2024-03-31,QRX,ey,0.05\n");
  const auto qrx = keel::store::security_with_symbol(l.db, "QRX");
  const auto p = keel::market::DayView(l.db).figure(qrx.id, "ey", Date::parse("2024-03-31"));
  REQUIRE(p);
  CHECK(p->known_on == Date::parse("2024-03-31"));
}

TEST_CASE("a restatement is kept beside the original and is invisible before its known_on") {
  Ledger l;
  l.import("m.csv", MarketKind::metrics,
           "date,symbol,metric,value,known_on\n"
           "2024-03-31,QRX,bps,4.20,2024-04-25\n"
           "2024-03-31,QRX,bps,4.05,2024-06-10\n"
           "2024-06-30,QRX,bps,4.40,2024-07-28\n");
  const auto id = keel::store::security_with_symbol(l.db, "QRX").id;
  const keel::market::DayView view(l.db);
  auto at = [&](const char* day) { return view.figure(id, "bps", Date::parse(day)); };
  CHECK_FALSE(at("2024-04-24"));  // the March figure is not yet published
  REQUIRE(at("2024-04-25"));
  CHECK(at("2024-04-25")->value == Decimal::parse("4.2"));
  CHECK(at("2024-06-09")->value == Decimal::parse("4.2"));  // restatement not yet known
  CHECK(at("2024-06-10")->value == Decimal::parse("4.05"));
  CHECK(at("2024-06-10")->known_on == Date::parse("2024-06-10"));
  CHECK(at("2024-07-27")->period == Date::parse("2024-03-31"));  // June period not yet known
  CHECK(at("2024-07-28")->value == Decimal::parse("4.4"));
  CHECK(at("2024-07-28")->period == Date::parse("2024-06-30"));
}

TEST_CASE("a distribution paid before its ex-date is refused") {
  Ledger l;
  const auto lines =
      l.refused("d.csv", MarketKind::distributions,
                "ex_date,pay_date,symbol,per_share\n2024-03-10,2024-03-01,QRX,0.2\n");
  REQUIRE(lines.size() == 1);
  CHECK(lines[0] ==
        l.path("d.csv") + ":2: column 'pay_date': 2024-03-01 is before the ex-date 2024-03-10");
}

TEST_CASE("a split with another ratio on a recorded day is refused even with --replace") {
  Ledger l;
  l.import("s.csv", MarketKind::splits, "date,symbol,ratio\n2024-05-01,QRX,2\n");
  ImportOptions o;
  o.replace = true;
  const auto lines =
      l.refused("t.csv", MarketKind::splits, "date,symbol,ratio\n2024-05-01,QRX,3\n", o);
  REQUIRE(lines.size() == 1);
  CHECK(lines[0].find("recorded splits cannot be changed") != std::string::npos);
}

TEST_CASE("a security with a different name is a conflict; identical rows are unchanged") {
  Ledger l;
  const auto same = l.import("s2.csv", MarketKind::securities, kSecurities);
  CHECK(same.unchanged == 2);
  CHECK(same.added == 0);
  const auto lines = l.refused("s3.csv", MarketKind::securities,
                               "symbol,name,kind,currency\nQRX,Quarix Renamed,stock,USD\n");
  REQUIRE(lines.size() == 1);
  CHECK(lines[0].find("use --replace") != std::string::npos);
}

TEST_CASE("a mapping made for another kind of import is refused") {
  Ledger l;
  ImportOptions o;
  o.mapping = keel::io::Mapping::parse("for = \"prices\"\n", "m.toml");
  CHECK_THROWS_WITH_AS(l.import("x.csv", MarketKind::metrics, "date\n", o),
                       doctest::Contains("this mapping is for importing prices, not metrics"),
                       keel::InputError);
}

namespace {

// Closes through MarketWriter, written whenever `buffer_bytes` are held;
// gives the problems reported, as "line: outcome".
std::vector<std::string> write_closes(
    Database& db, std::size_t buffer_bytes,
    const std::vector<std::tuple<std::string, std::string, std::string>>& rows) {
  std::vector<std::string> problems;
  keel::store::WriteTransaction tx(db);
  keel::store::MarketWriter w(db, false, buffer_bytes);
  w.on_price_problem([&](std::uint64_t line, keel::store::Upsert u, std::size_t, std::string_view,
                         std::string_view) {
    problems.push_back(std::to_string(line) +
                       (u == keel::store::Upsert::duplicate ? ": duplicate" : ": conflict"));
  });
  std::uint64_t line = 1;
  for (const auto& [sym, date, close] : rows) w.price(w.security(sym), date, close, ++line);
  w.finish_prices();
  tx.commit();
  return problems;
}

}  // namespace

TEST_CASE("prices written a row at a time store what one write of them stores") {
  std::vector<std::tuple<std::string, std::string, std::string>> rows;
  for (int d = 28; d >= 1; --d)
    for (const char* sym : {"VLM", "QRX"}) {
      const std::string date = "2024-02-" + std::string(d < 10 ? "0" : "") + std::to_string(d);
      rows.emplace_back(sym, date, std::to_string(d) + (sym[0] == 'V' ? ".5" : ""));
    }
  Ledger one, many;
  CHECK(write_closes(one.db, keel::store::MarketWriter::kPriceBufferBytes, rows).empty());
  CHECK(write_closes(many.db, 1, rows).empty());
  // The two ledgers' securities were imported a moment apart: that moment,
  // not what the writes stored, may differ (a second boundary under load).
  for (auto* l : {&one, &many}) l->db.sql().exec("UPDATE import_run SET imported_at = 'then'");
  CHECK(keel::store::content_dump(many.db) == keel::store::content_dump(one.db));
}

TEST_CASE("a key repeated after the buffered prices were written is still a duplicate") {
  Ledger l;
  l.import("p.csv", MarketKind::prices, prices_csv("2024-01-02,QRX,1\n"));
  const auto problems = write_closes(l.db, 1,
                                     {{"QRX", "2024-01-05", "2"},
                                      {"QRX", "2024-01-02", "1"},
                                      {"QRX", "2024-01-05", "2"},
                                      {"QRX", "2024-01-02", "1"},
                                      {"QRX", "2024-01-02", "3"}});
  CHECK(problems == std::vector<std::string>{"4: duplicate", "5: duplicate", "6: duplicate"});
}
