// A return series against another: held from the start of any month, split
// by the state of the market, capture ratios, and the worst falls of an
// index. The back-test and the comparison of rules use them.
//
// Contract
//  - Monthly returns are fractions, one per calendar month in order, nullopt
//    for a month that is not complete. Two series given together are aligned
//    month by month and have equal length (std::invalid_argument otherwise).
//  - window_returns(): for each start month i, the compounded return of
//    months i..i+h-1, prod(1 + r) - 1; nullopt when one of them is missing.
//    max(0, n - h + 1) entries; h < 1 throws std::invalid_argument.
//  - compare_returns(): over the positions where both are set: how many,
//    how often a was ahead (a > b), and the mean, the median (linear
//    interpolation between order statistics, as numpy's default), the worst
//    and the best of a - b.
//  - split_by_state(): the positions where the benchmark fell (return < 0)
//    and where it rose (>= 0: a flat one counts as rose), each with the
//    series' and the benchmark's arithmetic mean, how often the series was
//    ahead and the mean excess; positions where either is missing are left
//    out.
//  - capture(): up-capture (down-capture): the geometric mean monthly return
//    of the series over the months in which the benchmark rose (fell),
//    (prod(1 + r))^(1/n) - 1, divided by the benchmark's over the same
//    months. nullopt without such a month or when the benchmark's mean is 0.
//    The definition is common practice, from memory; no standard defines it.
//  - drawdown_episodes(): the falls of an index, one per new high (a level
//    above every earlier one): from that high to the first day of the lowest
//    level before the next new high, recovered on the first later day back
//    at or above the high. Deepest first (ties: earlier first), at most
//    `count`; the deepest is max_drawdown()'s (stats.h). Throws as it does.
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <vector>

#include "perf/stats.h"

namespace keel::perf {

using Returns = std::span<const std::optional<double>>;

std::vector<std::optional<double>> window_returns(Returns months, int h);

struct ExcessSummary {
  int periods = 0;
  int ahead = 0;                                    // a > b
  std::optional<double> mean, median, worst, best;  // of a - b
};
ExcessSummary compare_returns(Returns a, Returns b);

struct StateFigures {
  int periods = 0;
  int ahead = 0;  // the series above the benchmark
  std::optional<double> mean, benchmark_mean, mean_excess;
};
struct MarketStates {
  StateFigures fell, rose;
};
MarketStates split_by_state(Returns series, Returns benchmark);

struct Capture {
  int up_months = 0, down_months = 0;
  std::optional<double> up, down;
};
Capture capture(Returns series, Returns benchmark);

std::vector<Drawdown> drawdown_episodes(std::span<const IndexPoint> index, std::size_t count);

}  // namespace keel::perf
