// Examples of keel::Date: strict ISO 8601 calendar dates and day arithmetic.
#include "core/date.h"

#include <doctest/doctest.h>
#include <fmt/format.h>

#include <utility>

#include "core/error.h"

using keel::Date;

TEST_CASE("date: ISO text round-trips") {
  for (const char* text : {"2025-12-31", "0001-01-01", "9999-12-31", "2024-02-29"})
    CHECK(Date::parse(text).str() == text);
}

TEST_CASE("date: ISO text pads each calendar part with zeros, at both ends of the calendar") {
  for (const auto& [from, to] :
       {std::pair{Date::from_ymd(1, 1, 1), Date::from_ymd(2, 12, 31)},
        std::pair{Date::from_ymd(1999, 12, 1), Date::from_ymd(2001, 1, 31)},
        std::pair{Date::from_ymd(9998, 12, 1), Date::from_ymd(9999, 12, 31)}})
    for (Date d = from; d <= to; d = d.plus_days(1))
      REQUIRE(d.str() == fmt::format("{:04}-{:02}-{:02}", d.year(), d.month(), d.day()));
}

TEST_CASE("date: days that do not exist are refused") {
  CHECK_THROWS_WITH_AS(Date::parse("2025-02-29"), "'2025-02-29' is not a calendar date",
                       keel::InputError);
  CHECK_THROWS_AS(Date::parse("2025-13-01"), keel::InputError);
  CHECK_THROWS_AS(Date::parse("2025-04-31"), keel::InputError);
  CHECK_THROWS_AS(Date::parse("0000-01-01"), keel::InputError);
}

TEST_CASE("date: other shapes are refused with the expected form named") {
  CHECK_THROWS_WITH_AS(Date::parse("31/12/2025"),
                       "'31/12/2025' is not a date in the form YYYY-MM-DD", keel::InputError);
  CHECK_THROWS_AS(Date::parse("2025-1-01"), keel::InputError);
  CHECK_THROWS_AS(Date::parse("2025-01-01T00:00"), keel::InputError);
  CHECK_THROWS_AS(Date::parse(""), keel::InputError);
}

TEST_CASE("date: try_parse takes what parse takes and gives no value for the rest") {
  CHECK(Date::try_parse("2024-02-29") == Date::parse("2024-02-29"));
  CHECK(Date::try_parse("9999-12-31") == Date::parse("9999-12-31"));
  for (const char* text : {"2025-02-29", "2025-13-01", "0000-01-01", "31/12/2025", "2025-1-01",
                           "2025-01-01T00:00", ""})
    CHECK_FALSE(Date::try_parse(text));
}

TEST_CASE("date: differences count calendar days, leap years included") {
  CHECK(Date::parse("2025-01-01") - Date::parse("2024-01-01") == 366);
  CHECK(Date::parse("2024-03-01") - Date::parse("2024-02-28") == 2);
  CHECK(Date::parse("2025-03-01").plus_days(-1).str() == "2025-02-28");
}

TEST_CASE("date: adding months clamps to the end of the month") {
  CHECK(Date::parse("2025-01-31").plus_months(1).str() == "2025-02-28");
  CHECK(Date::parse("2024-01-31").plus_months(1).str() == "2024-02-29");
  CHECK(Date::parse("2025-03-15").plus_months(-3).str() == "2024-12-15");
  CHECK(Date::parse("2024-02-29").plus_years(1).str() == "2025-02-28");
}

TEST_CASE("date: month end") {
  CHECK(Date::parse("2024-02-10").month_end().str() == "2024-02-29");
  CHECK(Date::parse("2025-12-01").month_end().str() == "2025-12-31");
}

TEST_CASE("date: calendar parts") {
  const Date d = Date::parse("2031-07-09");
  CHECK(d.year() == 2031);
  CHECK(d.month() == 7);
  CHECK(d.day() == 9);
}

TEST_CASE("date: parsed days agree with std::chrono's calendar, leap days and both ends included") {
  // from_ymd() counts days with std::chrono; parse() with its own arithmetic.
  for (Date d = Date::from_ymd(1, 1, 1); d <= Date::from_ymd(3, 12, 31); d = d.plus_days(1))
    REQUIRE(Date::parse(d.str()) == Date::from_ymd(d.year(), d.month(), d.day()));
  for (Date d = Date::from_ymd(1599, 1, 1); d <= Date::from_ymd(2401, 12, 31); d = d.plus_days(1))
    REQUIRE(Date::parse(d.str()).days_since_epoch() == d.days_since_epoch());
  CHECK(Date::parse("9999-12-31") == Date::from_ymd(9999, 12, 31));
  CHECK(Date::parse("1970-01-01").days_since_epoch() == 0);
  CHECK_THROWS_AS(Date::parse("1900-02-29"), keel::InputError);
  CHECK(Date::parse("2000-02-29").month() == 2);
}
