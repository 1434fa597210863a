#include "backtest/signal.h"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <memory>
#include <numeric>
#include <set>
#include <stdexcept>
#include <unordered_set>

#include "backtest/backtest.h"
#include "core/error.h"
#include "ledger/actions.h"
#include "perf/stats.h"
#include "rules/inputs.h"
#include "rules/track_record.h"

namespace keel::backtest {

std::array<std::optional<double>, 5> quintile_means(std::span<const double> returns) {
  std::array<double, 5> sum{};
  std::array<int, 5> count{};
  const std::size_t n = returns.size();
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t q = 5 * i / n;
    sum[q] += returns[i];
    ++count[q];
  }
  std::array<std::optional<double>, 5> out;
  for (std::size_t q = 0; q < 5; ++q)
    if (count[q]) out[q] = sum[q] / count[q];
  return out;
}

namespace {

void check_request(const SignalRequest& req) {
  if (req.from > req.to)
    throw InputError(fmt::format("--from: {} is after --to {}", req.from.str(), req.to.str()));
  for (int m : req.horizons)
    if (m < 1 || m > 240)
      throw InputError(fmt::format("--horizons: {} is not a number of months from 1 to 240", m));
}

void by_name(const History& h, const rules::Rule& rule, const SignalRequest& req,
             const rules::Inputs& inputs, std::unique_ptr<rules::TrackRecord>& track,
             SignalResult& res) {
  if (!track) track = std::make_unique<rules::TrackRecord>(rule, inputs, h.market);
  rules::TrackRecordRule settings = rule.track_record.value_or(rules::TrackRecordRule{});
  // The whole check is the window: every month from `from`'s to `to`'s.
  settings.window_months =
      (req.to.year() - req.from.year()) * 12 + req.to.month() - req.from.month() + 1;
  res.by_name_horizons = req.horizons;
  if (rule.track_record && std::find(req.horizons.begin(), req.horizons.end(),
                                     rule.track_record->horizon_months) == req.horizons.end())
    res.by_name_horizons.push_back(rule.track_record->horizon_months);
  std::map<std::string, NameRecord> names;
  for (const std::int64_t id : inputs.universe())
    names[h.security(id).symbol] = NameRecord{id, h.security(id).symbol, {}};
  for (const int months : res.by_name_horizons) {
    settings.horizon_months = months;
    const auto stats = track->at(req.to, settings);
    for (auto& [symbol, n] : names) {
      const auto it = stats.find(n.security_id);
      n.records.push_back(it == stats.end() ? rules::TrackStat{} : it->second);
    }
  }
  for (auto& [symbol, n] : names) res.by_name.push_back(std::move(n));
}

}  // namespace

SignalResult signal(store::Database& db, const rules::Rule& rule, const SignalRequest& req) {
  check_request(req);
  return signal(load_history(db, rule, req.from, req.to, {}, rules::Convert::yes), rule, req);
}

SignalResult signal(const History& h, const rules::Rule& rule, const SignalRequest& req) {
  check_request(req);
  SignalResult res;
  res.rule_name = rule.name;
  res.from = req.from;
  res.to = req.to;
  const auto& days = h.market.trading_days();
  const auto next = h.market.next_trading_day();
  const auto starts = rebalance_days(days, next, req.from, req.to, rule.rebalance_months);
  const auto month_last = rebalance_days(days, next, req.from, req.to, 1);
  std::map<int, Date> by_month;  // year * 12 + month - 1
  for (Date d : month_last) by_month[d.year() * 12 + d.month() - 1] = d;

  rules::Inputs inputs(rule, h.market, h.currency, h.convert);
  const rules::ForwardReturns forward(h.market, inputs.converts_into());

  for (int months : req.horizons) {
    HorizonResult hr;
    hr.months = months;
    res.horizons.push_back(std::move(hr));
  }
  std::unique_ptr<rules::TrackRecord> track;
  if (rule.track_record) {
    track = std::make_unique<rules::TrackRecord>(rule, inputs, h.market);
    inputs.use(track.get());
  }
  for (Date day : starts) {
    const auto screened =
        rules::screen(rule, day, inputs.candidates(h.market, day, {}), rules::Explain::none);
    // A day on which the rule selects nothing still ranks its names: the
    // coefficient does not depend on the threshold. Without z's there is
    // nothing to rank.
    const bool scored = std::any_of(screened.lines.begin(), screened.lines.end(),
                                    [](const rules::ScreenLine& l) { return l.z.has_value(); });
    if (!scored) {
      res.notes.push_back(fmt::format("{}: skipped: {}", day.str(), screened.refusal->text(rule)));
      continue;
    }
    for (auto& hr : res.horizons) {
      const auto end_it = by_month.find(day.year() * 12 + day.month() - 1 + hr.months);
      if (end_it == by_month.end()) continue;
      std::vector<double> z, fwd;
      for (const auto& l : screened.lines) {
        if (!l.z || !l.track_ok) continue;
        const auto r = forward(l.security_id, day, end_it->second);
        if (!r) continue;
        z.push_back(*l.z);
        fwd.push_back(*r);
      }
      if (z.size() < 2) continue;
      SignalDay sd;
      sd.day = day;
      sd.end = end_it->second;
      sd.names = static_cast<int>(z.size());
      sd.ic = spearman(z, fwd);
      // Lines are in z order already; pair order follows it.
      const std::size_t fifth = std::max<std::size_t>(1, z.size() / 5);
      double cheap = 0, dear = 0;
      for (std::size_t i = 0; i < fifth; ++i) {
        cheap += fwd[i];
        dear += fwd[fwd.size() - 1 - i];
      }
      sd.spread = (cheap - dear) / static_cast<double>(fifth);
      sd.quintiles = quintile_means(fwd);
      hr.days.push_back(sd);
    }
  }
  if (req.by_name) by_name(h, rule, req, inputs, track, res);
  for (auto& hr : res.horizons) {
    std::vector<double> ics;
    double spread = 0;
    int negative = 0;
    for (const auto& d : hr.days) {
      spread += d.spread;
      if (!d.ic) continue;
      ics.push_back(*d.ic);
      if (*d.ic < 0) ++negative;
    }
    hr.ic_days = static_cast<int>(ics.size());
    if (!hr.days.empty()) hr.mean_spread = spread / static_cast<double>(hr.days.size());
    for (std::size_t q = 0; q < 5; ++q) {
      double sum = 0;
      int n = 0;
      for (const auto& d : hr.days)
        if (d.quintiles[q]) {
          sum += *d.quintiles[q];
          ++n;
        }
      if (n) hr.quintile_means[q] = sum / n;
    }
    if (ics.empty()) continue;
    const double n = static_cast<double>(ics.size());
    hr.mean_ic = std::accumulate(ics.begin(), ics.end(), 0.0) / n;
    hr.share_expected_sign = negative / n;
    if (const auto sd = perf::sample_sd(ics); sd && *sd > 0) {
      hr.ic_standard_error = *sd / std::sqrt(n);
      hr.t_stat = *hr.mean_ic / *hr.ic_standard_error;
    }
  }
  std::set<std::string> foreign;
  for (int c = 0; c < h.market.columns(); ++c)
    if (h.foreign(c)) foreign.insert(h.security(h.market.security_id(c)).currency);
  if (!foreign.empty())
    res.notes.insert(res.notes.begin(),
                     fmt::format("forward returns are in {}: the closes and cash of names priced "
                                 "in {} are taken at each day's rate (the latest on or before "
                                 "it); a name is not ranked on a day without one",
                                 *h.currency, fmt::join(foreign, ", ")));
  res.cautions = backtest_cautions();
  res.cautions.insert(res.cautions.begin(),
                      "Forward windows longer than the rebalancing step overlap, so their "
                      "t-statistics overstate the evidence.");
  return res;
}

}  // namespace keel::backtest
