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

TEST_CASE("price book: the last day with any close") {
  CHECK(sample().last_day() == day("2024-03-08"));
  CHECK_FALSE(PriceBook().last_day().has_value());
  const std::vector<Date> all = sample().all_days();
  REQUIRE(all.size() == 4);
  CHECK(all.front() == day("2024-03-04"));
  CHECK(all.back() == day("2024-03-08"));
}
