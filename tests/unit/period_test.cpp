// Period resolution: which days a returns report covers.
#include "perf/period.h"

#include <doctest/doctest.h>

#include <string>

#include "core/error.h"

using keel::Date;
using keel::InputError;
using namespace keel::perf;

namespace {

const Date kAsOf = Date::parse("2025-08-20");
const Date kInception = Date::parse("2012-03-05");

Period words(const char* word) {
  PeriodRequest r;
  r.period = word;
  return resolve_period(r, kAsOf, kInception);
}

std::string error_of(const PeriodRequest& r, Date as_of = kAsOf, Date inception = kInception) {
  try {
    resolve_period(r, as_of, inception);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("period words count back from the as-of day") {
  CHECK(words("mtd").from == Date::parse("2025-08-01"));
  CHECK(words("qtd").from == Date::parse("2025-07-01"));
  CHECK(words("ytd").from == Date::parse("2025-01-01"));
  CHECK(words("1y").from == Date::parse("2024-08-21"));
  CHECK(words("3y").from == Date::parse("2022-08-21"));
  CHECK(words("5y").from == Date::parse("2020-08-21"));
  CHECK(words("10y").from == Date::parse("2015-08-21"));
  CHECK(words("inception").from == kInception);
  for (const char* w : {"mtd", "qtd", "ytd", "1y", "10y", "inception"}) {
    CHECK(words(w).to == kAsOf);
    CHECK_FALSE(words(w).clamped);
  }
  // 1y over a leap day: 2024-02-29 lies inside, so 366 days.
  const Period y = resolve_period({std::nullopt, std::nullopt, std::nullopt, "1y"},
                                  Date::parse("2024-12-31"), kInception);
  CHECK(y.to - y.from + 1 == 366);
  // Quarters: November belongs to the one starting in October.
  const Period q = resolve_period({std::nullopt, std::nullopt, std::nullopt, "qtd"},
                                  Date::parse("2025-11-30"), kInception);
  CHECK(q.from == Date::parse("2025-10-01"));
}

TEST_CASE("a start before inception moves to inception") {
  const Period p = resolve_period({std::nullopt, std::nullopt, std::nullopt, "10y"}, kAsOf,
                                  Date::parse("2020-01-15"));
  CHECK(p.from == Date::parse("2020-01-15"));
  CHECK(p.clamped);
}

TEST_CASE("ranges and years") {
  PeriodRequest none;
  CHECK(resolve_period(none, kAsOf, kInception).from == kInception);
  CHECK(resolve_period(none, kAsOf, kInception).to == kAsOf);

  PeriodRequest range;
  range.from = Date::parse("2020-02-01");
  range.to = Date::parse("2020-02-29");
  const Period p = resolve_period(range, kAsOf, kInception);
  CHECK(p.from == Date::parse("2020-02-01"));
  CHECK(p.to == Date::parse("2020-02-29"));

  PeriodRequest from_only;
  from_only.from = Date::parse("2025-01-10");
  CHECK(resolve_period(from_only, kAsOf, kInception).to == kAsOf);

  PeriodRequest year;
  year.year = 2019;
  CHECK(resolve_period(year, kAsOf, kInception).from == Date::parse("2019-01-01"));
  CHECK(resolve_period(year, kAsOf, kInception).to == Date::parse("2019-12-31"));
  year.year = 2025;  // the as-of year: cut at the as-of day
  CHECK(resolve_period(year, kAsOf, kInception).to == kAsOf);
}

TEST_CASE("conflicting or impossible options are refused, naming the options") {
  PeriodRequest both;
  both.from = Date::parse("2020-01-01");
  both.year = 2020;
  CHECK(error_of(both).find("--from and --year cannot be combined") != std::string::npos);

  PeriodRequest year_and_word;
  year_and_word.year = 2020;
  year_and_word.period = "ytd";
  CHECK(error_of(year_and_word).find("--year and --period") != std::string::npos);

  PeriodRequest backwards;
  backwards.from = Date::parse("2020-03-01");
  backwards.to = Date::parse("2020-02-01");
  CHECK(error_of(backwards) == "--from 2020-03-01 is after --to 2020-02-01");

  PeriodRequest unknown;
  unknown.period = "2y";
  CHECK(error_of(unknown).find("--period: '2y' is not a period") != std::string::npos);

  PeriodRequest future;
  future.year = 2026;
  CHECK(error_of(future).find("--year 2026: starts after the as-of day 2025-08-20") !=
        std::string::npos);

  PeriodRequest early;
  early.year = 2011;
  CHECK(error_of(early).find("before the first transaction day 2012-03-05") != std::string::npos);
}
