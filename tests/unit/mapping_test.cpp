// Mapping files: the shipped examples parse and read, and bad keys are named.
#include "io/mapping.h"

#include <doctest/doctest.h>

#include "core/error.h"
#include "io/table.h"

using keel::io::ColumnSpec;
using keel::io::CsvOptions;
using keel::io::CsvReader;
using keel::io::ErrorList;
using keel::io::Mapping;
using keel::io::TableReader;

namespace {
const std::string kExamples = std::string(KEEL_SOURCE_DIR) + "/examples/import/";
}

TEST_CASE("the vendor closes example mapping reads its CSV into canonical prices") {
  const Mapping m = Mapping::load(kExamples + "vendor-closes.toml");
  CHECK(m.applies_to == "prices");
  CHECK(m.delimiter == ';');
  CHECK(m.decimal_mark == ',');
  CHECK(m.thousands == '.');
  CsvOptions o;
  o.delimiter = m.delimiter;
  auto csv = CsvReader::open(kExamples + "vendor-closes.csv", o);
  ErrorList errors("vendor-closes.csv");
  TableReader t(csv, m, {{"date"}, {"symbol"}, {"close"}}, errors);
  REQUIRE(t.header_ok());
  std::vector<std::string> got;
  std::string d, c;
  std::string_view s;
  while (t.next()) {
    REQUIRE(t.date(0, d));
    REQUIRE(t.text(1, s));
    REQUIRE(t.decimal(2, c));
    got.push_back(d + " " + std::string(s) + " " + c);
  }
  CHECK(errors.empty());
  CHECK(got == std::vector<std::string>{"2024-01-02 QRX 1234.5", "2024-01-02 VLM 98.1",
                                        "2024-01-03 QRX 1240", "2024-01-03 VLM 98.25"});
}

TEST_CASE("the broker trades example mapping derives kind from the sign of units") {
  const Mapping m = Mapping::load(kExamples + "broker-trades.toml");
  CHECK(m.applies_to == "transactions");
  REQUIRE(m.sign_rule);
  CHECK(m.sign_rule->from == "quantity");
  CHECK(m.defaults.at("account") == "Brokerage");
  auto csv = CsvReader::open(kExamples + "broker-trades.csv");
  ErrorList errors("broker-trades.csv");
  TableReader t(csv, m,
                {{"date"},
                 {"kind"},
                 {"symbol"},
                 {"quantity"},
                 {"price"},
                 {"fee", false},
                 {"account"},
                 {"ref", false}},
                errors);
  REQUIRE(t.header_ok());
  std::vector<std::string> got;
  std::string d, q, p, f;
  while (t.next()) {
    REQUIRE(t.date(0, d));
    REQUIRE(t.decimal(3, q));
    REQUIRE(t.decimal(4, p));
    REQUIRE(t.decimal(5, f));
    got.push_back(d + " " + std::string(t.raw(1)) + " " + std::string(t.raw(2)) + " " + q + "@" +
                  p + " fee " + f + " " + std::string(t.raw(6)) + " " + std::string(t.raw(7)));
  }
  CHECK(errors.empty());
  CHECK(got == std::vector<std::string>{"2024-01-08 buy QRX 100@1234.5 fee 4.95 Brokerage T-1001",
                                        "2024-01-15 sell QRX 40@1250 fee 4.95 Brokerage T-1002"});
}

TEST_CASE("an unknown mapping key is refused naming file, line and key") {
  CHECK_THROWS_WITH_AS(Mapping::parse("for = \"prices\"\n[dates]\nformatt = \"%Y\"\n", "m.toml"),
                       doctest::Contains("m.toml:3: key 'dates.formatt': unknown key"),
                       keel::InputError);
}

TEST_CASE("a date format without a day is refused") {
  CHECK_THROWS_WITH_AS(Mapping::parse("[dates]\nformat = \"%Y-%m\"\n", "m.toml"),
                       doctest::Contains("must contain %Y, %m and %d"), keel::InputError);
}

TEST_CASE("invalid TOML is refused with its position") {
  CHECK_THROWS_WITH_AS(Mapping::parse("[columns\n", "m.toml"), doctest::Contains("m.toml:1:"),
                       keel::InputError);
}

TEST_CASE("value maps translate file values case-insensitively") {
  const Mapping m = Mapping::parse("[values.kind]\n\"Equity\" = \"stock\"\n", "m.toml");
  auto csv = CsvReader::from_text("symbol,kind\nQRX,EQUITY\nVLM,fund\n", "s.csv");
  ErrorList errors("s.csv");
  TableReader t(csv, m, {{"symbol"}, {"kind"}}, errors);
  REQUIRE(t.next());
  CHECK(t.raw(1) == "stock");
  REQUIRE(t.next());
  CHECK(t.raw(1) == "fund");
}

TEST_CASE("headers are matched case-insensitively in any order; unknown ones are errors") {
  Mapping m;
  auto csv = CsvReader::from_text("CLOSE,Symbol,Date,Extra\n1,QRX,2024-01-02,x\n", "p.csv");
  ErrorList errors("p.csv");
  TableReader t(csv, m, {{"date"}, {"symbol"}, {"close"}}, errors);
  CHECK_FALSE(t.header_ok());
  REQUIRE(errors.size() == 1);
  CHECK(errors.lines()[0].rfind("p.csv:1: column 'Extra': unknown column", 0) == 0);
}

TEST_CASE("a missing required column is named at the header line") {
  Mapping m;
  auto csv = CsvReader::from_text("date,symbol\n2024-01-02,QRX\n", "p.csv");
  ErrorList errors("p.csv");
  TableReader t(csv, m, {{"date"}, {"symbol"}, {"close"}}, errors);
  CHECK_FALSE(t.header_ok());
  REQUIRE(errors.size() == 1);
  CHECK(errors.lines()[0] == "p.csv:1: column 'close': missing from the header");
}

TEST_CASE("a row with the wrong number of fields is an error (RFC 4180 section 2.4)") {
  Mapping m;
  auto csv = CsvReader::from_text("a,b\n1,2\n1,2,3\n", "x.csv");
  ErrorList errors("x.csv");
  TableReader t(csv, m, {{"a"}, {"b"}}, errors);
  CHECK(t.next());
  CHECK_FALSE(t.next());
  REQUIRE(errors.size() == 1);
  CHECK(errors.lines()[0] == "x.csv:3: has 3 fields but the header has 2 (RFC 4180 section 2.4)");
}
