#include "perf/overfit.h"

#include <algorithm>
#include <boost/math/distributions/normal.hpp>
#include <cmath>
#include <numeric>
#include <stdexcept>

namespace keel::perf {
namespace {

constexpr double kEulerMascheroni = 0.57721566490153286061;

// An undefined Sharpe ratio ranks below every defined one.
double rank_value(const std::optional<double>& sr) {
  return sr ? *sr : -std::numeric_limits<double>::infinity();
}

}  // namespace

Moments moments(std::span<const double> xs) {
  Moments m;
  m.n = static_cast<int>(xs.size());
  if (xs.empty()) return m;
  const double n = static_cast<double>(xs.size());
  m.mean = std::accumulate(xs.begin(), xs.end(), 0.0) / n;
  double m2 = 0, m3 = 0, m4 = 0;
  for (const double x : xs) {
    const double d = x - m.mean;
    m2 += d * d;
    m3 += d * d * d;
    m4 += d * d * d * d;
  }
  if (xs.size() >= 2) m.sd = std::sqrt(m2 / (n - 1));
  m2 /= n, m3 /= n, m4 /= n;
  if (m2 > 0) {
    m.skew = m3 / std::pow(m2, 1.5);
    m.kurtosis = m4 / (m2 * m2);
  }
  return m;
}

std::optional<double> sharpe_ratio(std::span<const double> returns) {
  const Moments m = moments(returns);
  if (!m.sd || *m.sd == 0) return std::nullopt;
  return m.mean / *m.sd;
}

double expected_max_sharpe(int trials, double sharpe_variance) {
  if (trials < 2) return 0;
  const boost::math::normal z;
  const double n = trials;
  return std::sqrt(sharpe_variance) *
         ((1 - kEulerMascheroni) * boost::math::quantile(z, 1 - 1 / n) +
          kEulerMascheroni * boost::math::quantile(z, 1 - 1 / (n * std::exp(1.0))));
}

std::optional<DeflatedSharpe> deflated_sharpe(std::span<const double> chosen_returns,
                                              std::span<const double> trial_sharpes) {
  const Moments m = moments(chosen_returns);
  if (!m.sd || *m.sd == 0 || !m.skew || !m.kurtosis) return std::nullopt;
  DeflatedSharpe d;
  d.sharpe = m.mean / *m.sd;
  d.observations = m.n;
  d.skew = *m.skew;
  d.kurtosis = *m.kurtosis;
  d.trials = static_cast<int>(trial_sharpes.size());
  if (const Moments t = moments(trial_sharpes); t.sd) d.trials_variance = *t.sd * *t.sd;
  d.expected_max = expected_max_sharpe(d.trials, d.trials_variance);
  const double root = 1 - d.skew * d.sharpe + (d.kurtosis - 1) / 4 * d.sharpe * d.sharpe;
  if (!(root > 0)) return std::nullopt;
  const double stat =
      (d.sharpe - d.expected_max) * std::sqrt(d.observations - 1.0) / std::sqrt(root);
  d.probability = boost::math::cdf(boost::math::normal(), stat);
  return d;
}

int pbo_blocks(int rows) {
  for (int s = 16; s >= 2; s -= 2)
    if (rows >= 2 * s) return s;
  return 0;
}

Pbo pbo(const std::vector<std::vector<double>>& columns, int blocks) {
  const std::size_t n = columns.size();
  if (n < 2) throw std::invalid_argument("pbo: at least two trials are needed");
  if (blocks < 2 || blocks % 2 != 0) throw std::invalid_argument("pbo: blocks must be even, >= 2");
  const std::size_t t = columns.front().size();
  for (const auto& c : columns)
    if (c.size() != t) throw std::invalid_argument("pbo: columns of different lengths");
  const auto s = static_cast<std::size_t>(blocks);
  if (t < 2 * s) throw std::invalid_argument("pbo: fewer than two rows a block");

  Pbo out;
  out.blocks = blocks;
  const std::size_t len = t / s;
  const std::size_t skip = t % s;  // the earliest rows are left out
  out.rows_used = static_cast<int>(len * s);

  // Per column and block, the sum and the sum of squares of the returns less
  // the column's mean: a half's Sharpe ratio then takes S/2 additions per
  // column instead of a pass over its rows, and centring keeps the variance
  // free of cancellation.
  std::vector<double> centre(n), sum(n * s), squares(n * s);
  for (std::size_t j = 0; j < n; ++j) {
    const auto used = std::span(columns[j]).subspan(skip);
    centre[j] = std::accumulate(used.begin(), used.end(), 0.0) / static_cast<double>(used.size());
    for (std::size_t b = 0; b < s; ++b)
      for (std::size_t r = 0; r < len; ++r) {
        const double d = used[b * len + r] - centre[j];
        sum[j * s + b] += d;
        squares[j * s + b] += d * d;
      }
  }
  const double half_rows = static_cast<double>(len * s / 2);
  const auto half_sharpe = [&](std::size_t j, const std::vector<bool>& chosen, bool in) {
    double s1 = 0, s2 = 0;
    for (std::size_t b = 0; b < s; ++b)
      if (chosen[b] == in) s1 += sum[j * s + b], s2 += squares[j * s + b];
    const double var = (s2 - s1 * s1 / half_rows) / (half_rows - 1);
    return rank_value(var > 0 ? std::optional<double>((centre[j] + s1 / half_rows) / std::sqrt(var))
                              : std::nullopt);
  };

  std::vector<bool> chosen(s, false);
  std::fill(chosen.begin(), chosen.begin() + static_cast<std::ptrdiff_t>(s / 2), true);
  std::vector<double> oos(n);
  int overfit = 0;
  // std::prev_permutation over a mask starting with its trues visits every
  // choice of S/2 blocks once, in lexicographic order of the chosen indices.
  do {
    std::size_t best = 0;
    double best_value = 0;
    for (std::size_t j = 0; j < n; ++j) {
      const double v = half_sharpe(j, chosen, true);
      if (j == 0 || v > best_value) best = j, best_value = v;
    }
    for (std::size_t j = 0; j < n; ++j) oos[j] = half_sharpe(j, chosen, false);
    // Mean rank of oos[best] among all: below + (equal + 1) / 2, counting itself.
    double below = 0, equal = 0;
    for (const double v : oos) {
      if (v < oos[best]) ++below;
      if (v == oos[best]) ++equal;
    }
    const double rank = below + (equal + 1) / 2;
    const double w = rank / (static_cast<double>(n) + 1);
    const double logit = std::log(w / (1 - w));
    out.logits.push_back(logit);
    if (logit <= 0) ++overfit;
  } while (std::prev_permutation(chosen.begin(), chosen.end()));
  out.combinations = static_cast<int>(out.logits.size());
  out.probability = static_cast<double>(overfit) / out.combinations;
  return out;
}

}  // namespace keel::perf
