#include "core/date.h"

#include <fmt/format.h>

#include <chrono>
#include <ctime>

#include "core/error.h"
#include "core/text.h"

namespace keel {
namespace {

namespace chr = std::chrono;

chr::year_month_day to_ymd(int days) {
  return chr::year_month_day{chr::sys_days{chr::days{days}}};
}

// Days since 1970-01-01 of a valid proleptic Gregorian date (the algorithm
// of H. Hinnant's "chrono-Compatible Low-Level Date Algorithms", from memory;
// date_test.cpp checks it against std::chrono). Market data reads millions
// of dates: this skips chrono's second check and conversions.
int days_from_civil(int y, int m, int d) {
  y -= m <= 2;
  const int era = y / 400;  // y >= 0 here
  const int yoe = y - era * 400;
  const int doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
  const int doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + doe - 719468;
}

bool parse_fixed_digits(std::string_view text, std::size_t from, std::size_t count, int& out) {
  out = 0;
  for (std::size_t i = from; i < from + count; ++i) {
    if (text[i] < '0' || text[i] > '9') return false;
    out = out * 10 + (text[i] - '0');
  }
  return true;
}

// The year, month and day of "YYYY-MM-DD" text; false for any other shape.
bool iso_fields(std::string_view text, int& y, int& m, int& d) {
  return text.size() == 10 && text[4] == '-' && text[7] == '-' &&
         parse_fixed_digits(text, 0, 4, y) && parse_fixed_digits(text, 5, 2, m) &&
         parse_fixed_digits(text, 8, 2, d);
}

}  // namespace

bool Date::valid_ymd(int year, int month, int day) {
  if (year < 1 || year > 9999 || month < 1 || month > 12 || day < 1) return false;
  static constexpr int kLast[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  const bool leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
  return day <= kLast[month - 1] + (month == 2 && leap);
}

Date Date::from_ymd(int year, int month, int day) {
  if (!valid_ymd(year, month, day))
    throw InputError(fmt::format("{:04}-{:02}-{:02} is not a calendar date", year, month, day));
  const chr::year_month_day ymd{chr::year{year}, chr::month{static_cast<unsigned>(month)},
                                chr::day{static_cast<unsigned>(day)}};
  return Date(static_cast<int>(chr::sys_days{ymd}.time_since_epoch().count()));
}

std::optional<Date> Date::try_parse(std::string_view text) noexcept {
  int y = 0, m = 0, d = 0;
  if (!iso_fields(text, y, m, d) || !valid_ymd(y, m, d)) return std::nullopt;
  return Date(days_from_civil(y, m, d));
}

Date Date::parse(std::string_view text) {
  int y = 0, m = 0, d = 0;
  const bool shaped = iso_fields(text, y, m, d);
  // printable(): the text may hold any byte, NUL included, and what() is a C string.
  if (!shaped)
    throw InputError(fmt::format("'{}' is not a date in the form YYYY-MM-DD", printable(text)));
  if (!valid_ymd(y, m, d)) throw InputError(fmt::format("'{}' is not a calendar date", text));
  return Date(days_from_civil(y, m, d));
}

Date Date::today() {
  const std::time_t now = std::time(nullptr);
  std::tm local{};
  localtime_r(&now, &local);
  return from_ymd(local.tm_year + 1900, local.tm_mon + 1, local.tm_mday);
}

int Date::year() const {
  return static_cast<int>(to_ymd(days_).year());
}
int Date::month() const {
  return static_cast<int>(static_cast<unsigned>(to_ymd(days_).month()));
}
int Date::day() const {
  return static_cast<int>(static_cast<unsigned>(to_ymd(days_).day()));
}

std::string Date::str() const {
  const auto ymd = to_ymd(days_);
  const int y = static_cast<int>(ymd.year());
  const auto m = static_cast<int>(static_cast<unsigned>(ymd.month()));
  const auto d = static_cast<int>(static_cast<unsigned>(ymd.day()));
  if (y < 0 || y > 9999) return fmt::format("{:04}-{:02}-{:02}", y, m, d);
  // YYYY-MM-DD written digit by digit: reports and loads format many dates.
  std::string out(10, '-');
  const auto digit = [](int v) { return static_cast<char>('0' + v); };
  out[0] = digit(y / 1000);
  out[1] = digit(y / 100 % 10);
  out[2] = digit(y / 10 % 10);
  out[3] = digit(y % 10);
  out[5] = digit(m / 10);
  out[6] = digit(m % 10);
  out[8] = digit(d / 10);
  out[9] = digit(d % 10);
  return out;
}

Date Date::plus_months(int n) const {
  const auto ymd = to_ymd(days_);
  // Months since 1 January of year 0, in 64 bits so no step can overflow.
  const long long total = static_cast<long long>(static_cast<int>(ymd.year())) * 12 +
                          static_cast<int>(unsigned(ymd.month())) - 1 + n;
  if (total < 12 || total >= 12LL * 10000)
    throw InputError(
        fmt::format("{} moved by {} months falls outside the years 1 to 9999", str(), n));
  const int y = static_cast<int>(total / 12);
  const int m = static_cast<int>(total % 12) + 1;
  const chr::year_month_day_last last{chr::year{y},
                                      chr::month_day_last{chr::month{static_cast<unsigned>(m)}}};
  const unsigned day = std::min(unsigned(ymd.day()), unsigned(last.day()));
  return from_ymd(y, m, static_cast<int>(day));
}

Date Date::month_end() const {
  const auto ymd = to_ymd(days_);
  const chr::year_month_day_last last{ymd.year(), chr::month_day_last{ymd.month()}};
  return Date(static_cast<int>(chr::sys_days{last}.time_since_epoch().count()));
}

}  // namespace keel
