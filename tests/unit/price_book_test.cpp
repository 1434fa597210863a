// PriceBook and its cursor: the close on or before a day, however asked.
#include <doctest/doctest.h>

#include <vector>

#include "store/prices.h"

using keel::Date;
using keel::Decimal;
using keel::store::PriceBook;

namespace {

Date day(const char* text) {
  return Date::parse(text);
}

// Two invented securities: 7 with closes on three days, 9 with one.
PriceBook sample() {
  PriceBook book;
  book.add(7, day("2024-03-04"), Decimal::parse("10.5"));
  book.add(7, day("2024-03-06"), Decimal::parse("11"));
  book.add(7, day("2024-03-08"), Decimal::parse("9.75"));
  book.add(9, day("2024-03-05"), Decimal::parse("200"));
  return book;
}

std::string text(const Decimal* d) {
  return d ? d->str() : "none";
}

}  // namespace

TEST_CASE("price book: a cursor gives what at() gives for every day, ascending or not") {
  const PriceBook book = sample();
  PriceBook::Cursor cursor(book);
  std::vector<Date> days;
  for (int i = 0; i < 8; ++i) days.push_back(day("2024-03-02").plus_days(i));
  std::vector<Date> order = days;                         // ascending
  order.insert(order.end(), days.rbegin(), days.rend());  // then descending
  order.insert(order.end(), days.begin(), days.end());    // and ascending again
  for (const Date d : order)
    for (const std::int64_t id : {7, 9, 8}) {
      CAPTURE(d.str());
      CAPTURE(id);
      const auto expected = book.at(id, d);
      CHECK(text(cursor.at(id, d)) == (expected ? expected->str() : "none"));
    }
}

TEST_CASE("price book: closes on or before a day, none before the first") {
  const PriceBook book = sample();
  PriceBook::Cursor cursor(book);
  CHECK(text(cursor.at(7, day("2024-03-03"))) == "none");
  CHECK(text(cursor.at(7, day("2024-03-04"))) == "10.5");
  CHECK(text(cursor.at(7, day("2024-03-07"))) == "11");
  CHECK(text(cursor.at(7, day("2030-01-01"))) == "9.75");
  CHECK(text(cursor.at(7, day("2024-03-05"))) == "10.5");
  CHECK(text(cursor.at(8, day("2024-03-05"))) == "none");
}

TEST_CASE("price book: every day with a close, once each, ascending across securities") {
  PriceBook book;
  book.add(3, day("2024-12-30"), Decimal::parse("5"));
  book.add(3, day("2025-01-02"), Decimal::parse("5.5"));
  book.add(1, day("2024-12-27"), Decimal::parse("40"));
  book.add(1, day("2024-12-30"), Decimal::parse("41"));
  book.add(1, day("2025-01-03"), Decimal::parse("42"));
  book.add(2, day("2025-01-02"), Decimal::parse("7"));
  const std::vector<Date> expected{day("2024-12-27"), day("2024-12-30"), day("2025-01-02"),
                                   day("2025-01-03")};
  CHECK(book.all_days() == expected);
  CHECK(PriceBook().all_days().empty());
  PriceBook one;
  one.add(4, day("2025-06-02"), Decimal::parse("1"));
  CHECK(one.all_days() == std::vector<Date>{day("2025-06-02")});
}

TEST_CASE("price book: the last day with any close") {
  CHECK(sample().last_day() == day("2024-03-08"));
  CHECK_FALSE(PriceBook().last_day().has_value());
  const std::vector<Date> all = sample().all_days();
  REQUIRE(all.size() == 4);
  CHECK(all.front() == day("2024-03-04"));
  CHECK(all.back() == day("2024-03-08"));
}
