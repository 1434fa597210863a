#include "perf/period.h"

#include <fmt/format.h>

#include <algorithm>
#include <vector>

#include "core/error.h"

namespace keel::perf {
namespace {

Date start_of_period(const std::string& word, Date as_of, Date inception) {
  if (word == "mtd") return Date::from_ymd(as_of.year(), as_of.month(), 1);
  if (word == "qtd") return Date::from_ymd(as_of.year(), (as_of.month() - 1) / 3 * 3 + 1, 1);
  if (word == "ytd") return Date::from_ymd(as_of.year(), 1, 1);
  if (word == "inception") return inception;
  for (const int n : {1, 3, 5, 10})
    if (word == fmt::format("{}y", n)) {
      // A start before year 1 is before any ledger day: the period is then
      // clamped to the first transaction day like any other early start.
      if (as_of.year() <= n) return Date::from_ymd(1, 1, 1);
      return as_of.plus_years(-n).plus_days(1);
    }
  throw InputError(fmt::format(
      "--period: '{}' is not a period; choose mtd, qtd, ytd, 1y, 3y, 5y, 10y or inception", word));
}

}  // namespace

Period resolve_period(const PeriodRequest& r, Date as_of, Date inception) {
  std::vector<std::string> given;
  if (r.from) given.emplace_back("--from");
  if (r.to) given.emplace_back("--to");
  if (r.year) given.emplace_back("--year");
  if (r.period) given.emplace_back("--period");
  const bool range = r.from || r.to;
  if (static_cast<int>(range) + static_cast<int>(r.year.has_value()) +
          static_cast<int>(r.period.has_value()) >
      1)
    throw InputError(
        fmt::format("{} cannot be combined; give a range (--from/--to), --year or "
                    "--period",
                    fmt::join(given, " and ")));
  Period p{inception, as_of, false};
  std::string what = "the period";
  if (range) {
    if (r.from) p.from = *r.from;
    if (r.to) p.to = *r.to;
    what = r.from ? "--from" : "--to";
    if (p.to < p.from)
      throw InputError(
          r.from && r.to ? fmt::format("--from {} is after --to {}", p.from.str(), p.to.str())
          : r.from ? fmt::format("--from {} is after the as-of day {}", p.from.str(), as_of.str())
                   : fmt::format("--to {} is before the first transaction "
                                 "day {}",
                                 p.to.str(), inception.str()));
  } else if (r.year) {
    what = "--year";
    if (*r.year < 1 || *r.year > 9999)
      throw InputError(fmt::format("--year: {} is not a calendar year", *r.year));
    p.from = Date::from_ymd(*r.year, 1, 1);
    p.to = std::min(Date::from_ymd(*r.year, 12, 31), as_of);
    if (p.from > as_of)
      throw InputError(
          fmt::format("--year {}: starts after the as-of day {}", *r.year, as_of.str()));
  } else if (r.period) {
    what = "--period " + *r.period;
    p.from = start_of_period(*r.period, as_of, inception);
  }
  if (p.to < inception)
    throw InputError(fmt::format("{}: ends on {}, before the first transaction day {}", what,
                                 p.to.str(), inception.str()));
  if (p.from < inception) {
    p.from = inception;
    p.clamped = true;
  }
  return p;
}

}  // namespace keel::perf
