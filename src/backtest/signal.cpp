#include "backtest/signal.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <stdexcept>
#include <unordered_set>

#include "backtest/backtest.h"
#include "core/error.h"
#include "ledger/actions.h"
#include "perf/stats.h"
#include "rules/inputs.h"

namespace keel::backtest {
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

// A security's events in one timeline: on a day, splits, then corporate
// actions, then distributions (the order the back-test applies them).
struct Event {
  Date day;
  int rank = 0;       // 0 split, 1 corporate action, 2 distribution
  double amount = 0;  // ratio, or cash per unit
  const CorporateAction* action = nullptr;
};

}  // namespace

std::optional<double> spearman(std::span<const double> x, std::span<const double> y) {
  if (x.size() != y.size()) throw std::invalid_argument("spearman: unequal lengths");
  if (x.size() < 2) return std::nullopt;
  const auto rx = average_ranks(x), ry = average_ranks(y);
  const double n = static_cast<double>(x.size());
  const double mx = std::accumulate(rx.begin(), rx.end(), 0.0) / n;
  const double my = std::accumulate(ry.begin(), ry.end(), 0.0) / n;
  double sxy = 0, sxx = 0, syy = 0;
  for (std::size_t i = 0; i < rx.size(); ++i) {
    sxy += (rx[i] - mx) * (ry[i] - my);
    sxx += (rx[i] - mx) * (rx[i] - mx);
    syy += (ry[i] - my) * (ry[i] - my);
  }
  if (!(sxx > 0) || !(syy > 0)) return std::nullopt;
  return sxy / std::sqrt(sxx * syy);
}

namespace {

void check_request(const SignalRequest& req) {
  if (req.from > req.to)
    throw InputError(fmt::format("--from: {} is after --to {}", req.from.str(), req.to.str()));
  for (int m : req.horizons)
    if (m < 1 || m > 240)
      throw InputError(fmt::format("--horizons: {} is not a number of months from 1 to 240", m));
}

}  // namespace

SignalResult signal(store::Database& db, const rules::Rule& rule, const SignalRequest& req) {
  check_request(req);
  return signal(load_history(db, rule, req.from, req.to), rule, req);
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

  // Each security's splits, corporate actions and distributions in order.
  std::unordered_map<std::int64_t, std::vector<Event>> events;
  for (const auto& s : h.market.split_events())
    events[s.security_id].push_back(Event{s.date, 0, s.ratio.to_double(), nullptr});
  for (const auto& a : h.market.action_events())
    events[a.security_id].push_back(Event{a.date, 1, 0, &a});
  for (const auto& d : h.market.distribution_events())
    events[d.security_id].push_back(Event{d.ex_date, 2, d.per_share.to_double(), nullptr});
  for (auto& [id, ev] : events)
    std::stable_sort(ev.begin(), ev.end(), [](const Event& a, const Event& b) {
      return a.day != b.day ? a.day < b.day : a.rank < b.rank;
    });
  // A statistic, in doubles: the closes as the nearest doubles to the stored
  // decimals (as scipy reads them).
  const auto& m = h.market;
  auto price = [&](std::int64_t id, Date day) {
    const int c = m.column(id);
    return c < 0 ? std::nan("") : m.value(m.row(day), c);
  };
  auto forward = [&](std::int64_t id, Date start, Date end) -> std::optional<double> {
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
    if (auto it = events.find(id); it != events.end())
      for (const auto& e : it->second) {
        if (e.day <= start || e.day > end) continue;
        if (e.rank == 0) {
          units *= e.amount;
        } else if (e.rank == 2) {
          cash += units * e.amount;
        } else {
          const UnitEffect u = unit_effect(*e.action);
          if (!u.target_units.is_zero())
            other.emplace_back(*e.action->target_id, units * u.target_units.to_double());
          cash += units * u.cash.to_double();
          units *= u.keeps.to_double();
          // Off the market: the window ends here, at what the action paid.
          if (u.keeps.is_zero()) {
            const double v = cash + value_of_others(e.day);
            if (std::isnan(v)) return std::nullopt;
            return v / p0 - 1;
          }
        }
      }
    const double p1 = price(id, end);
    const double v = units * p1 + cash + value_of_others(end);
    if (std::isnan(v)) return std::nullopt;
    return v / p0 - 1;
  };

  for (int months : req.horizons) {
    HorizonResult hr;
    hr.months = months;
    res.horizons.push_back(std::move(hr));
  }
  const rules::Inputs inputs(rule, h.market, h.currency);
  for (Date day : starts) {
    const auto screened =
        rules::screen(rule, day, inputs.candidates(h.market, day, {}), rules::Explain::none);
    if (screened.refusal) {
      res.notes.push_back(fmt::format("{}: skipped: {}", day.str(), screened.refusal->text(rule)));
      continue;
    }
    for (auto& hr : res.horizons) {
      const auto end_it = by_month.find(day.year() * 12 + day.month() - 1 + hr.months);
      if (end_it == by_month.end()) continue;
      std::vector<double> z, fwd;
      for (const auto& l : screened.lines) {
        if (!l.passed) continue;
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
      hr.days.push_back(sd);
    }
  }
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
    if (ics.empty()) continue;
    const double n = static_cast<double>(ics.size());
    hr.mean_ic = std::accumulate(ics.begin(), ics.end(), 0.0) / n;
    hr.share_expected_sign = negative / n;
    if (const auto sd = perf::sample_sd(ics); sd && *sd > 0)
      hr.t_stat = *hr.mean_ic / (*sd / std::sqrt(n));
  }
  res.cautions = backtest_cautions();
  res.cautions.insert(res.cautions.begin(),
                      "Forward windows longer than the rebalancing step overlap, so their "
                      "t-statistics overstate the evidence.");
  return res;
}

}  // namespace keel::backtest
