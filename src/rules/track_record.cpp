#include "rules/track_record.h"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <set>
#include <stdexcept>
#include <tuple>

#include "ledger/actions.h"

namespace keel::rules {
namespace {

std::vector<double> average_ranks(std::span<const double> x) {
  std::vector<std::size_t> order(x.size());
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return x[a] < x[b]; });
  std::vector<double> rank(x.size());
  for (std::size_t i = 0; i < order.size();) {
    std::size_t j = i;
    while (j + 1 < order.size() && x[order[j + 1]] == x[order[i]]) ++j;
    const double r = (static_cast<double>(i) + static_cast<double>(j)) / 2 + 1;
    for (std::size_t k = i; k <= j; ++k) rank[order[k]] = r;
    i = j + 1;
  }
  return rank;
}

}  // namespace

std::optional<double> pearson(std::span<const double> x, std::span<const double> y) {
  if (x.size() != y.size()) throw std::invalid_argument("pearson: unequal lengths");
  if (x.size() < 2) return std::nullopt;
  const double n = static_cast<double>(x.size());
  const double mx = std::accumulate(x.begin(), x.end(), 0.0) / n;
  const double my = std::accumulate(y.begin(), y.end(), 0.0) / n;
  double sxy = 0, sxx = 0, syy = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    sxy += (x[i] - mx) * (y[i] - my);
    sxx += (x[i] - mx) * (x[i] - mx);
    syy += (y[i] - my) * (y[i] - my);
  }
  if (!(sxx > 0) || !(syy > 0)) return std::nullopt;
  // Rounding can carry |r| a hair past one; scipy clips it the same way.
  return std::clamp(sxy / std::sqrt(sxx * syy), -1.0, 1.0);
}

std::optional<double> spearman(std::span<const double> x, std::span<const double> y) {
  if (x.size() != y.size()) throw std::invalid_argument("spearman: unequal lengths");
  if (x.size() < 2) return std::nullopt;
  const auto rx = average_ranks(x), ry = average_ranks(y);
  return pearson(rx, ry);
}

std::vector<Date> month_ends(const std::vector<Date>& trading_days, std::optional<Date> next,
                             Date from, Date to) {
  std::vector<Date> out;
  for (std::size_t i = 0; i < trading_days.size(); ++i) {
    const Date d = trading_days[i];
    const std::optional<Date> after =
        i + 1 < trading_days.size() ? std::optional<Date>(trading_days[i + 1]) : next;
    const bool last = !after || after->month() != d.month() || after->year() != d.year();
    if (last && d >= from && d <= to) out.push_back(d);
  }
  return out;
}

// ---------------------------------------------------------------- forward returns

ForwardReturns::ForwardReturns(const market::Series& series, std::optional<std::string> into)
    : m_(series), into_(std::move(into)) {
  for (const auto& s : m_.split_events())
    events_[s.security_id].push_back(Event{s.date, 0, s.ratio.to_double(), nullptr});
  for (const auto& a : m_.action_events())
    events_[a.security_id].push_back(Event{a.date, 1, 0, &a});
  for (const auto& d : m_.distribution_events())
    events_[d.security_id].push_back(Event{d.ex_date, 2, d.per_share.to_double(), nullptr});
  // On a day: splits, then corporate actions, then distributions (the order
  // the back-test applies them).
  for (auto& [id, ev] : events_)
    std::stable_sort(ev.begin(), ev.end(), [](const Event& a, const Event& b) {
      return a.day != b.day ? a.day < b.day : a.rank < b.rank;
    });
}

// The closes as the nearest doubles to the stored decimals (as scipy reads them).
double ForwardReturns::price(std::int64_t id, Date day) const {
  const int c = m_.column(id);
  return c < 0 ? std::nan("") : m_.value(m_.row(day), c) * rate(id, day);
}

double ForwardReturns::rate(std::int64_t id, Date day) const {
  if (!into_) return 1;
  const auto q = m_.try_rate(m_.security(id)->currency, *into_, day);
  return q ? q->rate.to_double() : std::nan("");
}

std::optional<double> ForwardReturns::operator()(std::int64_t id, Date start, Date end) const {
  const double p0 = price(id, start);
  if (std::isnan(p0) || !(p0 > 0)) return std::nullopt;
  // Units of the name, cash paid, and what spin-offs handed out (valued at
  // the end).
  double units = 1, cash = 0;
  std::vector<std::pair<std::int64_t, double>> other;
  auto value_of_others = [&](Date day) {
    double v = 0;
    for (const auto& [t, u] : other) v += u * price(t, day);
    return v;
  };
  if (auto it = events_.find(id); it != events_.end())
    for (const auto& e : it->second) {
      if (e.day <= start || e.day > end) continue;
      if (e.rank == 0) {
        units *= e.amount;
      } else if (e.rank == 2) {
        cash += units * e.amount * rate(id, e.day);
      } else {
        const UnitEffect u = unit_effect(*e.action);
        if (!u.target_units.is_zero())
          other.emplace_back(*e.action->target_id, units * u.target_units.to_double());
        cash += units * u.cash.to_double() * rate(id, e.day);
        units *= u.keeps.to_double();
        // Off the market: the window ends here, at what the action paid.
        if (u.keeps.is_zero()) {
          const double v = cash + value_of_others(e.day);
          if (std::isnan(v)) return std::nullopt;
          return v / p0 - 1;
        }
      }
    }
  const double v = units * price(id, end) + cash + value_of_others(end);
  if (std::isnan(v)) return std::nullopt;
  return v / p0 - 1;
}

// ---------------------------------------------------------------- track record

TrackRecord::TrackRecord(const Rule& rule, const Inputs& inputs, const market::Series& series)
    : rule_(rule), forward_(series, inputs.converts_into()) {
  ends_ = month_ends(series.trading_days(), series.next_trading_day(), series.from(), series.to());
  z_.resize(ends_.size());
  for (std::size_t k = 0; k < ends_.size(); ++k) {
    by_month_[month_of(ends_[k])] = k;
    // The screen exactly as it ran on t; only its z's are kept.
    const auto screened =
        screen(rule, ends_[k], inputs.candidates(series, ends_[k], {}), Explain::none);
    for (const auto& l : screened.lines)
      if (l.z) z_[k].emplace(l.security_id, *l.z);
  }
  std::set<std::int64_t> scored;
  for (const auto& zs : z_)
    for (const auto& [id, z] : zs) scored.insert(id);
  scored_.assign(scored.begin(), scored.end());
}

Date TrackRecord::first_day(const TrackRecordRule& settings, Date from) {
  return Date::from_ymd(from.year(), from.month(), 1).plus_months(-settings.window_months);
}

const std::unordered_map<std::int64_t, double>& TrackRecord::returns(std::size_t k, int months,
                                                                     TrackReturns mode) const {
  const auto key = std::make_tuple(k, months, static_cast<int>(mode));
  if (auto it = cache_.find(key); it != cache_.end()) return it->second;
  auto& out = cache_[key];
  const auto end = by_month_.find(month_of(ends_[k]) + months);
  if (end == by_month_.end()) return out;
  for (const auto& [id, z] : z_[k])
    if (const auto r = forward_(id, ends_[k], ends_[end->second])) out.emplace(id, *r);
  if (mode == TrackReturns::absolute || out.empty()) return out;
  double sum = 0;
  for (const auto& [id, r] : out) sum += r;
  const double n = static_cast<double>(out.size());
  const double mean = sum / n;
  double ss = 0;
  for (const auto& [id, r] : out) ss += (r - mean) * (r - mean);
  const double sd = out.size() > 1 ? std::sqrt(ss / (n - 1)) : 0;
  for (auto& [id, r] : out) {
    if (mode == TrackReturns::relative)
      r -= mean;
    else
      r = sd > 0 ? (r - mean) / sd : std::nan("");
  }
  // A day without spread has no standardised returns.
  if (mode == TrackReturns::zscore && !(sd > 0)) out.clear();
  return out;
}

std::unordered_map<std::int64_t, TrackStat> TrackRecord::at(Date day,
                                                            const TrackRecordRule& settings) const {
  std::unordered_map<std::int64_t, TrackStat> out;
  out.reserve(scored_.size());
  for (const std::int64_t id : scored_) out.emplace(id, TrackStat{});
  // The anchor: the latest month-end on or before the day.
  const auto after = std::upper_bound(ends_.begin(), ends_.end(), day);
  if (after == ends_.begin()) return out;
  const int anchor = month_of(*std::prev(after));
  std::unordered_map<std::int64_t, std::pair<std::vector<double>, std::vector<double>>> pairs;
  for (int month = anchor - settings.window_months + 1; month + settings.horizon_months <= anchor;
       ++month) {
    const auto it = by_month_.find(month);
    if (it == by_month_.end()) continue;
    const auto& r = returns(it->second, settings.horizon_months, settings.returns);
    for (const auto& [id, z] : z_[it->second]) {
      const auto ri = r.find(id);
      if (ri == r.end()) continue;
      auto& [zs, rs] = pairs[id];
      zs.push_back(z);
      rs.push_back(ri->second);
    }
  }
  for (const auto& [id, p] : pairs) {
    auto& stat = out[id];
    stat.observations = static_cast<int>(p.first.size());
    stat.correlation = settings.method == Correlation::pearson ? pearson(p.first, p.second)
                                                               : spearman(p.first, p.second);
  }
  return out;
}

LedgerTrackRecord::LedgerTrackRecord(store::Database& db, const Rule& rule, Inputs& inputs,
                                     const market::View& catalog, Date day)
    : series_(market::Series::load(
          db,
          inputs.series_request(catalog, TrackRecord::first_day(*rule.track_record, day), day))),
      record_(rule, inputs, series_) {
  inputs.use(&record_);
}

}  // namespace keel::rules
