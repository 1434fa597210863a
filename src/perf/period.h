// Which days a performance report covers, from the options a person gives.
//
// Contract
//  - At most one of: an explicit range (--from and/or --to), --year, --period.
//    Giving two is an InputError naming both options.
//  - Nothing given: inception .. as-of.
//  - --from alone runs to the as-of; --to alone starts at inception.
//  - --year Y: Jan 1 .. Dec 31 of Y, cut at the as-of when Y is its year.
//  - --period: mtd (first of the as-of's month), qtd (first of its calendar
//    quarter), ytd (Jan 1), Ny for N in 1, 3, 5, 10 (the day after the same
//    date N years earlier, so 1y is 365 or 366 days), inception (the first
//    transaction day); all end on the as-of.
//  - A start before inception is moved to inception (`clamped` says so): the
//    ledger has no history to measure before it.
//  - Errors (InputError, naming the option): an unknown period word; an end
//    before the start; a period ending before inception; a start after the
//    as-of.
#pragma once

#include <optional>
#include <string>

#include "core/date.h"

namespace keel::perf {

struct PeriodRequest {
  std::optional<Date> from;
  std::optional<Date> to;
  std::optional<int> year;
  std::optional<std::string> period;  // mtd|qtd|ytd|1y|3y|5y|10y|inception
};

struct Period {
  Date from;
  Date to;
  bool clamped = false;  // the asked start lay before inception
};

Period resolve_period(const PeriodRequest& request, Date as_of, Date inception);

}  // namespace keel::perf
