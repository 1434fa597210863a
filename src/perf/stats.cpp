#include "perf/stats.h"

#include <fmt/format.h>

#include <cmath>

#include "core/error.h"

namespace keel::perf {

std::optional<double> sample_sd(std::span<const double> xs) {
  if (xs.size() < 2) return std::nullopt;
  double mean = 0;
  for (double x : xs) mean += x;
  mean /= static_cast<double>(xs.size());
  double squares = 0;
  for (double x : xs) squares += (x - mean) * (x - mean);
  return std::sqrt(squares / static_cast<double>(xs.size() - 1));
}

std::optional<double> annualize(double period_return, int days) {
  if (days < 365 || 1.0 + period_return < 0) return std::nullopt;
  return std::pow(1.0 + period_return, 365.0 / days) - 1.0;
}

std::optional<Drawdown> max_drawdown(std::span<const IndexPoint> index) {
  if (index.empty()) return std::nullopt;
  if (!(index.front().level > 0))
    throw InputError("drawdown: the index must start at a positive level");
  for (std::size_t i = 1; i < index.size(); ++i) {
    if (!(index[i - 1].day < index[i].day))
      throw InputError(
          fmt::format("drawdown: index days are not increasing at {}", index[i].day.str()));
  }
  std::optional<Drawdown> worst;
  std::size_t peak = 0;
  std::size_t worst_peak = 0;
  for (std::size_t i = 1; i < index.size(); ++i) {
    if (index[i].level > index[peak].level) {
      peak = i;
      continue;
    }
    const double depth = index[i].level / index[peak].level - 1.0;
    if (depth < 0 && (!worst || depth < worst->depth)) {
      worst = Drawdown{depth, index[peak].day, index[i].day, std::nullopt};
      worst_peak = peak;
    }
  }
  if (worst) {
    for (std::size_t i = worst_peak + 1; i < index.size(); ++i) {
      if (index[i].day > worst->trough && index[i].level >= index[worst_peak].level) {
        worst->recovery = index[i].day;
        break;
      }
    }
  }
  return worst;
}

}  // namespace keel::perf
