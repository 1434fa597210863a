// Small statistics used by the performance figures.
//
// Contract
//  - sample_sd(): standard deviation with the n-1 divisor; nullopt for fewer
//    than two observations.
//  - annualize(): (1+R)^(365/days) - 1 for a period return R over `days`
//    calendar days; nullopt when days < 365 (short periods are never scaled
//    up) or when 1+R < 0.
//  - max_drawdown(): deepest fall of an index from a running peak, as a
//    non-positive fraction (-0.25 = a fall of 25 %). The peak is the first day
//    the peak level was reached, the trough the first day of the deepest
//    level, recovery the first later day back at or above the peak level.
//    nullopt when the index never falls below an earlier level. Points must
//    be in increasing day order with positive first level; throws
//    keel::InputError otherwise.
#pragma once

#include <optional>
#include <span>

#include "core/date.h"

namespace keel::perf {

std::optional<double> sample_sd(std::span<const double> xs);

std::optional<double> annualize(double period_return, int days);

struct IndexPoint {
  Date day;
  double level;
};

struct Drawdown {
  double depth;  // trough / peak - 1, < 0
  Date peak;
  Date trough;
  std::optional<Date> recovery;
};

std::optional<Drawdown> max_drawdown(std::span<const IndexPoint> index);

}  // namespace keel::perf
