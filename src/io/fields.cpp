#include "io/fields.h"

#include <fmt/format.h>

#include "core/date.h"
#include "core/decimal.h"
#include "core/error.h"
#include "core/text.h"

namespace keel::io {
namespace {

bool digit(char c) {
  return c >= '0' && c <= '9';
}

}  // namespace

bool canonical_decimal(std::string_view text, std::string& out, std::string& why) {
  out.clear();
  std::size_t i = 0;
  bool negative = false;
  if (i < text.size() && (text[i] == '+' || text[i] == '-')) negative = text[i++] == '-';
  const std::size_t int_begin = i;
  while (i < text.size() && digit(text[i])) ++i;
  const std::size_t int_end = i;
  std::size_t frac_begin = i, frac_end = i;
  if (i < text.size() && text[i] == '.') {
    frac_begin = ++i;
    while (i < text.size() && digit(text[i])) ++i;
    frac_end = i;
  }
  // Longer text, or more fractional digits than a Decimal may hold, goes
  // through Decimal::parse so the limits and messages are the same.
  const bool simple = i == text.size() && (int_end > int_begin || frac_end > frac_begin) &&
                      text.size() <= 40 &&
                      frac_end - frac_begin <= static_cast<std::size_t>(Decimal::kMaxScale);
  if (!simple) {
    auto d = Decimal::try_parse(text);
    if (!d) {
      try {
        Decimal::parse(text);
      } catch (const InputError& e) {
        why = e.what();
      }
      if (why.empty()) why = fmt::format("'{}' is not a decimal number", printable(text));
      return false;
    }
    out = d->str();
    return true;
  }
  std::size_t a = int_begin;
  while (a < int_end && text[a] == '0') ++a;
  std::size_t z = frac_end;
  while (z > frac_begin && text[z - 1] == '0') --z;
  const bool zero = a == int_end && z == frac_begin;
  if (zero) {
    out.push_back('0');
    return true;
  }
  if (negative) out.push_back('-');
  if (a == int_end)
    out.push_back('0');
  else
    out.append(text.substr(a, int_end - a));
  if (z > frac_begin) {
    out.push_back('.');
    out.append(text.substr(frac_begin, z - frac_begin));
  }
  return true;
}

bool iso_date(std::string_view t, std::string& why) {
  const bool shape = t.size() == 10 && digit(t[0]) && digit(t[1]) && digit(t[2]) && digit(t[3]) &&
                     t[4] == '-' && digit(t[5]) && digit(t[6]) && t[7] == '-' && digit(t[8]) &&
                     digit(t[9]);
  if (!shape) {
    why = fmt::format("'{}' is not a date written YYYY-MM-DD", printable(t));
    return false;
  }
  const int y = (t[0] - '0') * 1000 + (t[1] - '0') * 100 + (t[2] - '0') * 10 + (t[3] - '0');
  const int m = (t[5] - '0') * 10 + (t[6] - '0');
  const int d = (t[8] - '0') * 10 + (t[9] - '0');
  if (!Date::valid_ymd(y, m, d)) {
    why = fmt::format("{} is not a day of the calendar", printable(t));
    return false;
  }
  return true;
}

DateFormat::DateFormat(std::string pattern) : pattern_(std::move(pattern)) {
  bool y = false, m = false, d = false;
  for (std::size_t i = 0; i < pattern_.size(); ++i) {
    if (pattern_[i] != '%') continue;
    if (i + 1 == pattern_.size())
      throw InputError(fmt::format("date format '{}' ends with a lone %", printable(pattern_)));
    const char c = pattern_[++i];
    if (c == 'Y')
      y = true;
    else if (c == 'm')
      m = true;
    else if (c == 'd')
      d = true;
    else if (c != '%')
      throw InputError(fmt::format("date format '{}': unknown directive %{}; use %Y, %m, %d or %%",
                                   printable(pattern_), printable(std::string_view(&c, 1))));
  }
  if (!(y && m && d))
    throw InputError(
        fmt::format("date format '{}' must contain %Y, %m and %d", printable(pattern_)));
}

bool DateFormat::to_iso(std::string_view text, std::string& out, std::string& why) const {
  if (iso()) {
    if (!iso_date(text, why)) return false;
    out.assign(text);
    return true;
  }
  int y = -1, m = -1, d = -1;
  std::size_t t = 0;
  auto bad = [&] {
    why = fmt::format("'{}' does not match the date format '{}'", printable(text),
                      printable(pattern_));
    return false;
  };
  auto number = [&](int min_digits, int max_digits, int& value) {
    int n = 0;
    value = 0;
    while (n < max_digits && t < text.size() && digit(text[t])) {
      value = value * 10 + (text[t++] - '0');
      ++n;
    }
    return n >= min_digits;
  };
  for (std::size_t i = 0; i < pattern_.size(); ++i) {
    const char p = pattern_[i];
    if (p == '%' && pattern_[i + 1] != '%') {
      const char c = pattern_[++i];
      const bool ok = c == 'Y' ? number(4, 4, y) : c == 'm' ? number(1, 2, m) : number(1, 2, d);
      if (!ok) return bad();
      continue;
    }
    if (p == '%') ++i;
    if (t >= text.size() || text[t] != p) return bad();
    ++t;
  }
  if (t != text.size()) return bad();
  if (!Date::valid_ymd(y, m, d)) {
    why = fmt::format("'{}' is not a day of the calendar", printable(text));
    return false;
  }
  out = fmt::format("{:04}-{:02}-{:02}", y, m, d);
  return true;
}

bool normalize_number(std::string_view text, char decimal_mark, char thousands, std::string& out,
                      std::string& why) {
  out.clear();
  bool seen_mark = false;
  for (char c : text) {
    if (thousands != 0 && c == thousands) {
      if (seen_mark) {
        why = fmt::format("'{}' has a thousands separator after the decimal mark", printable(text));
        return false;
      }
      continue;
    }
    if (c == decimal_mark) {
      seen_mark = true;
      out.push_back('.');
    } else if (c == '.' && decimal_mark != '.') {
      why = fmt::format("'{}' has '.' but the decimal mark is '{}'", printable(text),
                        std::string_view(&decimal_mark, 1));
      return false;
    } else {
      out.push_back(c);
    }
  }
  return true;
}

}  // namespace keel::io
