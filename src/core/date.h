// Date: a calendar day (proleptic Gregorian), years 1 to 9999, no time zone.
//
// Contract
//  - parse() accepts exactly ISO 8601 "YYYY-MM-DD" and throws InputError for
//    anything else, including days that do not exist (2025-02-29);
//    try_parse() takes the same texts and gives no value for the rest.
//  - str() gives the same form back. Ordering and arithmetic are by day count.
//  - today() is the local calendar date of the machine (respects TZ).
#pragma once

#include <compare>
#include <optional>
#include <string>
#include <string_view>

namespace keel {

class Date {
 public:
  Date() = default;                                    // 1970-01-01
  static Date from_ymd(int year, int month, int day);  // throws InputError
  static Date parse(std::string_view text);
  static std::optional<Date> try_parse(std::string_view text) noexcept;
  static bool valid_ymd(int year, int month, int day);
  static Date from_days(int days_since_epoch) { return Date(days_since_epoch); }
  static Date today();

  int year() const;
  int month() const;
  int day() const;
  int days_since_epoch() const { return days_; }
  std::string str() const;

  Date plus_days(int n) const { return Date(days_ + n); }
  // Same day of month n months later, clamped to the month's last day.
  // Throws InputError when the result falls outside years 1 to 9999.
  Date plus_months(int n) const;
  Date plus_years(int n) const { return plus_months(12 * n); }
  Date month_end() const;
  friend int operator-(Date a, Date b) { return a.days_ - b.days_; }

  friend bool operator==(Date, Date) = default;
  friend std::strong_ordering operator<=>(Date, Date) = default;

 private:
  explicit Date(int days) : days_(days) {}
  int days_ = 0;
};

}  // namespace keel
