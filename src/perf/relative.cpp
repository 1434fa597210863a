#include "perf/relative.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace keel::perf {
namespace {

void check_aligned(Returns a, Returns b) {
  if (a.size() != b.size())
    throw std::invalid_argument("perf: two monthly return series of different lengths");
}

double mean_of(const std::vector<double>& xs) {
  double s = 0;
  for (const double x : xs) s += x;
  return s / static_cast<double>(xs.size());
}

// Linear interpolation between order statistics (numpy's and pandas' default).
double median_sorted(const std::vector<double>& xs) {
  const double pos = (static_cast<double>(xs.size()) - 1) * 0.5;
  const auto lo = static_cast<std::size_t>(pos);
  if (lo + 1 >= xs.size()) return xs.back();
  return xs[lo] + (pos - static_cast<double>(lo)) * (xs[lo + 1] - xs[lo]);
}

std::optional<double> geometric_mean(const std::vector<double>& rs) {
  if (rs.empty()) return std::nullopt;
  double log_sum = 0;
  for (const double r : rs) {
    if (!(1 + r > 0)) return std::nullopt;  // a total loss has no geometric mean
    log_sum += std::log1p(r);
  }
  return std::expm1(log_sum / static_cast<double>(rs.size()));
}

}  // namespace

std::vector<std::optional<double>> window_returns(Returns months, int h) {
  if (h < 1) throw std::invalid_argument("perf: a window of fewer than one month");
  const auto n = static_cast<std::size_t>(h);
  std::vector<std::optional<double>> out;
  for (std::size_t start = 0; start + n <= months.size(); ++start) {
    double growth = 1;
    bool whole = true;
    for (std::size_t i = start; i < start + n && whole; ++i) {
      if (months[i])
        growth *= 1 + *months[i];
      else
        whole = false;
    }
    out.push_back(whole ? std::optional<double>(growth - 1) : std::nullopt);
  }
  return out;
}

ExcessSummary compare_returns(Returns a, Returns b) {
  check_aligned(a, b);
  ExcessSummary s;
  std::vector<double> excess;
  for (std::size_t i = 0; i < a.size(); ++i) {
    if (!a[i] || !b[i]) continue;
    excess.push_back(*a[i] - *b[i]);
    if (*a[i] > *b[i]) ++s.ahead;
  }
  s.periods = static_cast<int>(excess.size());
  if (excess.empty()) return s;
  s.mean = mean_of(excess);
  std::sort(excess.begin(), excess.end());
  s.median = median_sorted(excess);
  s.worst = excess.front();
  s.best = excess.back();
  return s;
}

MarketStates split_by_state(Returns series, Returns benchmark) {
  check_aligned(series, benchmark);
  struct Sums {
    std::vector<double> r, b;
  } fell, rose;
  for (std::size_t i = 0; i < series.size(); ++i) {
    if (!series[i] || !benchmark[i]) continue;
    Sums& s = *benchmark[i] < 0 ? fell : rose;
    s.r.push_back(*series[i]);
    s.b.push_back(*benchmark[i]);
  }
  auto figures = [](const Sums& s) {
    StateFigures f;
    f.periods = static_cast<int>(s.r.size());
    if (s.r.empty()) return f;
    for (std::size_t i = 0; i < s.r.size(); ++i)
      if (s.r[i] > s.b[i]) ++f.ahead;
    f.mean = mean_of(s.r);
    f.benchmark_mean = mean_of(s.b);
    f.mean_excess = *f.mean - *f.benchmark_mean;
    return f;
  };
  return MarketStates{figures(fell), figures(rose)};
}

Capture capture(Returns series, Returns benchmark) {
  check_aligned(series, benchmark);
  std::vector<double> up_r, up_b, down_r, down_b;
  for (std::size_t i = 0; i < series.size(); ++i) {
    if (!series[i] || !benchmark[i]) continue;
    auto& r = *benchmark[i] < 0 ? down_r : up_r;
    auto& b = *benchmark[i] < 0 ? down_b : up_b;
    r.push_back(*series[i]);
    b.push_back(*benchmark[i]);
  }
  auto ratio = [](const std::vector<double>& r, const std::vector<double>& b) {
    const auto gr = geometric_mean(r), gb = geometric_mean(b);
    if (!gr || !gb || *gb == 0) return std::optional<double>();
    return std::optional<double>(*gr / *gb);
  };
  Capture c;
  c.up_months = static_cast<int>(up_r.size());
  c.down_months = static_cast<int>(down_r.size());
  c.up = ratio(up_r, up_b);
  c.down = ratio(down_r, down_b);
  return c;
}

std::vector<Drawdown> drawdown_episodes(std::span<const IndexPoint> index, std::size_t count) {
  std::vector<Drawdown> out;
  if (!max_drawdown(index)) return out;  // checks the index, as max_drawdown does
  constexpr std::size_t kNone = static_cast<std::size_t>(-1);
  std::size_t peak = 0;
  std::size_t trough = kNone;  // of the episode from `peak`
  auto close_episode = [&](std::size_t end) {
    if (trough == kNone) return;
    Drawdown d{index[trough].level / index[peak].level - 1.0, index[peak].day, index[trough].day,
               std::nullopt};
    for (std::size_t i = trough + 1; i < end; ++i)
      if (index[i].level >= index[peak].level) {
        d.recovery = index[i].day;
        break;
      }
    if (!d.recovery && end < index.size()) d.recovery = index[end].day;
    out.push_back(d);
  };
  for (std::size_t i = 1; i < index.size(); ++i) {
    if (index[i].level > index[peak].level) {
      close_episode(i);
      peak = i;
      trough = kNone;
    } else if (index[i].level < index[peak].level &&
               (trough == kNone || index[i].level < index[trough].level)) {
      trough = i;
    }
  }
  close_episode(index.size());
  std::stable_sort(out.begin(), out.end(),
                   [](const Drawdown& a, const Drawdown& b) { return a.depth < b.depth; });
  if (out.size() > count) out.resize(count);
  return out;
}

}  // namespace keel::perf
