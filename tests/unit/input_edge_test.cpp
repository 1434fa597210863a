// Regression tests for input-edge bugs found by fuzzing and the bad-input table.
#include <doctest/doctest.h>

#include <string>

#include "core/date.h"
#include "core/decimal.h"
#include "core/error.h"
#include "core/text.h"
#include "io/csv.h"
#include "io/fields.h"
#include "io/sha256.h"
#include "ledger/holdings.h"
#include "perf/period.h"

using keel::Date;
using keel::Decimal;
using keel::InputError;

TEST_CASE("bug: the intake accepted 31 to 40 digits after the point that Decimal refuses") {
  const std::string text = "0.0000000000000000000000000000001";  // 31 places, 33 characters
  std::string out, why;
  CHECK_FALSE(keel::io::canonical_decimal(text, out, why));
  CHECK(why ==
        "'0.0000000000000000000000000000001' is not a decimal number: more than 30 digits after "
        "the point");
  CHECK_FALSE(Decimal::try_parse(text).has_value());
  // Trailing zeros past the 30th place carry no value and are still accepted.
  CHECK(keel::io::canonical_decimal("1.5000000000000000000000000000000000", out, why));
  CHECK(out == "1.5");
}

TEST_CASE("bug: moving back past year 1 by months read outside the month table") {
  CHECK_THROWS_WITH_AS(Date::parse("0005-06-30").plus_years(-10),
                       "0005-06-30 moved by -120 months falls outside the years 1 to 9999",
                       InputError);
  CHECK_THROWS_WITH_AS(Date::parse("9999-12-31").plus_months(1),
                       "9999-12-31 moved by 1 months falls outside the years 1 to 9999",
                       InputError);
  CHECK(Date::parse("0001-12-31").plus_months(-11).str() == "0001-01-31");
  CHECK(Date::parse("9999-01-31").plus_months(10).str() == "9999-11-30");
}

TEST_CASE("bug: a ten-year period from an as-of day in year 5 failed instead of clamping") {
  keel::perf::PeriodRequest r;
  r.period = "10y";
  const auto p =
      keel::perf::resolve_period(r, Date::parse("0005-06-30"), Date::parse("0003-02-01"));
  CHECK(p.from == Date::parse("0003-02-01"));
  CHECK(p.to == Date::parse("0005-06-30"));
  CHECK(p.clamped);
}

TEST_CASE("bug: a lot acquired in year 9999 made the holding-period test throw") {
  CHECK_FALSE(keel::ledger::held_long_term(Date::parse("9999-01-01"), Date::parse("9999-12-31")));
  CHECK(keel::ledger::held_long_term(Date::parse("9998-01-01"), Date::parse("9999-12-31")));
}

TEST_CASE("bug: C1 control characters in UTF-8 reached the terminal and were stored in names") {
  // U+009B is a one-byte control sequence introducer on some terminals.
  CHECK(keel::printable("A\xC2\x9B"
                        "2JB") == "A\\xc2\\x9b2JB");
  CHECK(keel::printable("caf\xC3\xA9") == "caf\xC3\xA9");  // ordinary letters stay
  CHECK_THROWS_WITH_AS(keel::check_name("account name", "A\xC2\x85Z", 200),
                       "account name 'A\\xc2\\x85Z' contains a control character", InputError);
  CHECK_NOTHROW(keel::check_name("account name", "\xC2\xA0Z", 200));  // U+00A0 is not a control
}

TEST_CASE("bug: hashing an empty in-memory file passed a null pointer to memcpy") {
  // An empty std::vector's data() may be null; update() must not hand it on.
  keel::io::Sha256 sha;
  sha.update(nullptr, 0);
  // FIPS 180-4 / NIST example: SHA-256 of the empty message.
  CHECK(sha.hex() == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  keel::io::CsvOptions options;
  options.hash = true;
  auto reader = keel::io::CsvReader::from_text("", "empty.csv", options);
  keel::io::CsvRecord record;
  CHECK_FALSE(reader.next(record));
  CHECK(reader.sha256_hex() == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST_CASE("bug: a NUL byte in a number or date cut the error message short") {
  using namespace std::string_literals;
  CHECK_THROWS_WITH_AS(Decimal::parse("5\0x"s),
                       "'5\\x00x' is not a decimal number: unexpected character '\\x00'",
                       InputError);
  CHECK_THROWS_WITH_AS(Date::parse("2024\0"s), "'2024\\x00' is not a date in the form YYYY-MM-DD",
                       InputError);
}
