#include "backtest/backtest.h"

#include <fmt/format.h>

#include <algorithm>
#include <limits>
#include <map>
#include <set>
#include <unordered_set>

#include "core/error.h"
#include "core/text.h"
#include "rules/inputs.h"

namespace keel::backtest {
namespace {

// Units are kept to this many places in the frictionless mode: far below any
// price's cent, so the simulated value is exact to well within 1e-12.
constexpr int kUnitPlaces = 20;

struct Owed {
  Date pay;
  Decimal amount;
};

struct State {
  Decimal cash;
  std::map<std::int64_t, Decimal> units;  // only positive quantities
  std::vector<Owed> owed;
};

Decimal price_on(const History& h, std::int64_t id, Date day) {
  const auto p = h.close(id, day);
  // A held security always has a close on or before any later day: it was
  // bought at one.
  if (!p)
    throw std::logic_error(fmt::format("backtest: no close for security {} on {}", id, day.str()));
  return *p;
}

Decimal holdings_value(const History& h, const State& s, Date day) {
  Decimal v;
  for (const auto& [id, q] : s.units) v += q * price_on(h, id, day);
  return v;
}

struct Selection {
  std::size_t passed = 0, selected = 0;
  std::vector<rules::Target> targets;
  std::optional<std::string> none;  // why nothing is held
};

std::set<std::int64_t> held_in(const State& s) {
  std::set<std::int64_t> held;
  for (const auto& [id, q] : s.units) held.insert(id);
  return held;
}

Selection select(const History& h, const rules::Inputs& inputs, const rules::Rule& rule, Date day,
                 const State& s) {
  auto chosen = inputs.select(h.market, day, held_in(s));
  Selection out;
  out.passed = chosen.screen.passed;
  out.selected = chosen.screen.selected;
  out.targets = std::move(chosen.targets);
  if (chosen.refusal) out.none = chosen.refusal->text(rule);
  return out;
}

void rebalance_frictionless(const History& h, const Selection& sel, Date day, State& s,
                            RebalanceDay& rd) {
  const Decimal value = s.cash + holdings_value(h, s, day);
  Decimal weight_sum;
  for (const auto& t : sel.targets)
    if (t.weight.is_positive()) weight_sum += t.weight;
  std::map<std::int64_t, Decimal> next;
  if (weight_sum.is_positive())
    for (const auto& t : sel.targets) {
      if (!t.weight.is_positive()) continue;
      const Decimal price = price_on(h, t.security_id, day);
      next[t.security_id] += Decimal::divide(value * t.weight, weight_sum * price, kUnitPlaces);
    }
  std::set<std::int64_t> touched;
  for (const auto& [id, q] : s.units) touched.insert(id);
  for (const auto& [id, q] : next) touched.insert(id);
  Decimal invested;
  for (std::int64_t id : touched) {
    const Decimal price = price_on(h, id, day);
    const auto a = s.units.find(id);
    const auto b = next.find(id);
    const Decimal before = a == s.units.end() ? Decimal() : a->second;
    const Decimal after = b == next.end() ? Decimal() : b->second;
    invested += after * price;
    const Decimal diff = after - before;
    if (diff.is_zero()) continue;
    rd.traded += diff.abs() * price;
    rd.trades.push_back(Trade{h.security(id).symbol,
                              diff.is_positive() ? rules::Side::buy : rules::Side::sell, diff.abs(),
                              price, Decimal()});
  }
  s.units = std::move(next);
  s.cash = value - invested;
}

void rebalance_with_orders(const History& h, const rules::Inputs& inputs, const rules::Rule& rule,
                           const Selection& sel, Date day, State& s, RebalanceDay& rd) {
  rules::Portfolio p;
  rules::AccountState acct;
  acct.id = 1;
  acct.name = "simulated pool";
  acct.cash = s.cash;
  for (const auto& [id, q] : s.units) acct.holdings[id] = rules::HoldingState{q, {}};
  p.accounts.push_back(std::move(acct));
  // A held security always has a close on or before any later day: it was
  // bought at one.
  const auto unpriced = [&](std::int64_t id) -> std::optional<Decimal> {
    throw std::logic_error(fmt::format("backtest: no close for security {} on {}", id, day.str()));
  };
  std::vector<std::string> quote_notes;  // stale closes: the back-test trades at them as they are
  const rules::Quotes quotes =
      inputs.quotes(h.market, day, sel.targets, held_in(s), unpriced, quote_notes);
  const auto plan = rules::orders(p, sel.targets, quotes, rule.trading, day);
  const auto after = rules::apply(p, plan.orders);
  for (const auto& o : plan.orders) {
    rd.traded += o.value;
    rd.fees += o.fee;
    rd.trades.push_back(Trade{o.symbol, o.side, o.quantity, o.price, o.fee});
  }
  s.cash = after.accounts.front().cash;
  s.units.clear();
  for (const auto& [id, hs] : after.accounts.front().holdings)
    if (hs.quantity.is_positive()) s.units[id] = hs.quantity;
}

StrategyRun simulate(const History& h, const rules::Rule& rule, const Request& req,
                     const std::vector<Date>& rebalance, std::string label, bool report_progress,
                     std::vector<std::string>& notes) {
  const rules::Inputs inputs(rule, h.market);
  StrategyRun run;
  run.label = std::move(label);
  State s;
  s.cash = req.start_value;
  const Date opening = req.from.plus_days(-1);
  run.curve.push_back(CurvePoint{opening, req.start_value, req.start_value, 0});
  auto next_rebalance = rebalance.begin();
  Date prev = opening;
  double turnover_sum = 0;
  double names_sum = 0;
  run.names_min = std::numeric_limits<int>::max();
  const auto& days = h.market.trading_days();
  const auto& splits = h.market.split_events();
  const auto& distributions = h.market.distribution_events();
  std::size_t next_split = 0, next_distribution = 0;
  while (next_split < splits.size() && splits[next_split].date <= prev) ++next_split;
  while (next_distribution < distributions.size() &&
         distributions[next_distribution].ex_date <= prev)
    ++next_distribution;
  const auto first = std::lower_bound(days.begin(), days.end(), req.from);
  for (auto it = first; it != days.end() && *it <= req.to; ++it) {
    const Date day = *it;
    for (; next_split < splits.size() && splits[next_split].date <= day; ++next_split) {
      const auto& sp = splits[next_split];
      if (auto u = s.units.find(sp.security_id); u != s.units.end()) u->second *= sp.ratio;
    }
    for (; next_distribution < distributions.size() &&
           distributions[next_distribution].ex_date <= day;
         ++next_distribution) {
      const auto& d = distributions[next_distribution];
      const auto u = s.units.find(d.security_id);
      if (u == s.units.end()) continue;
      const Decimal amount = u->second * d.per_share;
      run.distributions += amount;
      if (req.frictionless)
        u->second += Decimal::divide(amount, price_on(h, d.security_id, day), kUnitPlaces);
      else
        s.owed.push_back(Owed{d.pay_date, amount});
    }
    std::erase_if(s.owed, [&](const Owed& o) {
      if (o.pay > day) return false;
      s.cash += o.amount;
      return true;
    });
    if (next_rebalance != rebalance.end() && *next_rebalance == day) {
      RebalanceDay rd;
      rd.day = day;
      rd.value_before = s.cash + holdings_value(h, s, day);
      const Selection sel = select(h, inputs, rule, day, s);
      rd.passed = sel.passed;
      rd.selected = sel.selected;
      rd.no_selection = sel.none;
      if (sel.none)
        notes.push_back(fmt::format("{} ({}): nothing selected, the pool holds cash: {}", day.str(),
                                    run.label, *sel.none));
      if (req.frictionless)
        rebalance_frictionless(h, sel, day, s, rd);
      else
        rebalance_with_orders(h, inputs, rule, sel, day, s, rd);
      rd.names_after = static_cast<int>(s.units.size());
      run.fees += rd.fees;
      if (rd.value_before.is_positive())
        turnover_sum += (rd.traded.to_double() / 2) / rd.value_before.to_double();
      names_sum += rd.names_after;
      run.names_min = std::min(run.names_min, rd.names_after);
      run.names_max = std::max(run.names_max, rd.names_after);
      run.rebalances.push_back(std::move(rd));
      ++next_rebalance;
      if (report_progress && req.progress)
        req.progress(run.rebalances.size(), rebalance.size(), day);
    }
    Decimal owed;
    for (const auto& o : s.owed) owed += o.amount;
    run.curve.push_back(CurvePoint{day, s.cash + owed + holdings_value(h, s, day), s.cash,
                                   static_cast<int>(s.units.size())});
    prev = day;
  }
  if (run.rebalances.empty()) run.names_min = 0;
  run.names_mean = run.rebalances.empty() ? 0 : names_sum / run.rebalances.size();
  const double years = (req.to - req.from + 1) / 365.25;
  run.turnover_per_year = turnover_sum / years;
  return run;
}

perf::PerfInput perf_input(const StrategyRun& run, const Request& req,
                           const std::optional<std::vector<perf::LevelPoint>>& bench) {
  perf::PerfInput in;
  in.from = req.from;
  in.to = req.to;
  for (const auto& c : run.curve) in.series.push_back(perf::DayPoint{c.day, c.value, {}, {}});
  in.benchmark = bench;
  return in;
}

std::optional<double> quantile_sorted(const std::vector<double>& xs, double q) {
  if (xs.empty()) return std::nullopt;
  // Linear interpolation between order statistics (numpy/pandas default).
  const double hpos = (static_cast<double>(xs.size()) - 1) * q;
  const auto lo = static_cast<std::size_t>(hpos);
  if (lo + 1 >= xs.size()) return xs.back();
  return xs[lo] + (hpos - static_cast<double>(lo)) * (xs[lo + 1] - xs[lo]);
}

// Windows of n consecutive complete months, compounding perf::measure's
// monthly returns of the rule and of the other series.
RollingRow rolling(const std::vector<perf::MonthRow>& rule_months,
                   const std::vector<std::optional<double>>& other, int n, std::string against) {
  RollingRow row;
  row.against = std::move(against);
  row.months = n;
  std::vector<double> excess;
  for (std::size_t start = 0; start + static_cast<std::size_t>(n) <= rule_months.size(); ++start) {
    double r = 1, b = 1;
    bool ok = true;
    for (std::size_t i = start; i < start + static_cast<std::size_t>(n); ++i) {
      if (!rule_months[i].complete || !other[i]) {
        ok = false;
        break;
      }
      r *= 1 + rule_months[i].twr;
      b *= 1 + *other[i];
    }
    if (!ok) continue;
    ++row.windows;
    if (r > b) ++row.beat;
    excess.push_back(r - b);
  }
  std::sort(excess.begin(), excess.end());
  row.median_excess = quantile_sorted(excess, 0.5);
  if (!excess.empty()) {
    row.worst_excess = excess.front();
    row.best_excess = excess.back();
  }
  return row;
}

}  // namespace

std::vector<std::string> backtest_cautions() {
  return {
      "Back-tests flatter: the rule was chosen by someone who already knew this past, and small "
      "changes to it that happened to fit the past look better than they will do.",
      "Costs, taxes, spreads and fills in life differ from the simulation's fee model and "
      "closing prices; taxes are not modelled at all (ask your tax authority or a licensed "
      "professional).",
      "Past results do not predict future ones. This is the output of your own rule on your own "
      "data, not investment advice.",
  };
}

rules::Rule baseline_rule(const rules::Rule& rule) {
  rules::Rule b = rule;
  b.name = rule.name + " (baseline: every eligible name, equal weight)";
  b.selection.by = rules::SelectBy::top_pct;
  b.selection.top_pct = Decimal(100);
  b.selection.exit_z.reset();
  b.weights.scheme = rules::Scheme::equal;
  b.weights.max_weight = Decimal(1);
  return b;
}

namespace {

void check_request(const Request& req) {
  if (req.from > req.to)
    throw InputError(fmt::format("--from: {} is after --to {}", req.from.str(), req.to.str()));
  if (!req.start_value.is_positive())
    throw InputError(fmt::format("--start-value: {} is not above zero", req.start_value.str()));
  if (req.rolling_months < 1 || req.rolling_months > 600)
    throw InputError(
        fmt::format("--rolling: {} is not a number of months from 1 to 600", req.rolling_months));
}

}  // namespace

Result run(store::Database& db, const rules::Rule& rule, const Request& request) {
  check_request(request);
  std::vector<std::string> extra;
  if (request.benchmark) extra.push_back(*request.benchmark);
  const History h = load_history(db, rule, request.from.plus_days(-1), request.to, extra);
  return run(h, rule, request);
}

Result run(const History& h, const rules::Rule& rule, const Request& req) {
  check_request(req);
  const auto& days = h.market.trading_days();
  const auto first = std::lower_bound(days.begin(), days.end(), req.from);
  if (first == days.end() || *first > req.to)
    throw InputError(fmt::format("--from/--to: the ledger holds no close from {} to {}",
                                 req.from.str(), req.to.str()));

  Result res;
  res.rule_name = rule.name;
  res.from = req.from;
  res.to = req.to;
  res.start_value = req.start_value;
  res.frictionless = req.frictionless;
  res.rebalance_days =
      rebalance_days(days, h.market.next_trading_day(), req.from, req.to, rule.rebalance_months);
  if (res.rebalance_days.empty())
    throw InputError(fmt::format(
        "--from/--to: no month's last trading day falls between {} and {}; the rule never "
        "rebalances",
        req.from.str(), req.to.str()));

  std::optional<std::vector<perf::LevelPoint>> bench;
  if (req.benchmark) {
    std::optional<std::int64_t> id;
    if (const Security* s = h.market.security(*req.benchmark)) id = s->id;
    if (!id)
      throw InputError(
          fmt::format("--benchmark: no security '{}' in the ledger", printable(*req.benchmark)));
    const Date opening = req.from.plus_days(-1);
    const auto open_level = h.close(*id, opening);
    if (!open_level)
      throw InputError(fmt::format("--benchmark: '{}' has no close on or before {}",
                                   printable(*req.benchmark), opening.str()));
    bench.emplace();
    bench->push_back(perf::LevelPoint{opening, *open_level});
    for (auto it = first; it != days.end() && *it <= req.to; ++it)
      if (auto p = h.close(*id, *it)) bench->push_back(perf::LevelPoint{*it, *p});
    res.benchmark = *req.benchmark;
  }

  res.rule = simulate(h, rule, req, res.rebalance_days, "rule", true, res.notes);
  res.baseline =
      simulate(h, baseline_rule(rule), req, res.rebalance_days, "baseline", false, res.notes);
  res.rule.perf = perf::measure(perf_input(res.rule, req, bench));
  res.baseline.perf = perf::measure(perf_input(res.baseline, req, bench));

  const auto& months = res.rule.perf.months;
  if (bench) {
    std::vector<std::optional<double>> other;
    for (const auto& m : months) other.push_back(m.benchmark);
    res.rolling.push_back(
        rolling(months, other, req.rolling_months, "benchmark " + *req.benchmark));
  }
  {
    std::vector<std::optional<double>> other;
    const auto& bm = res.baseline.perf.months;
    for (std::size_t i = 0; i < months.size(); ++i)
      other.push_back(i < bm.size() && bm[i].complete ? std::optional<double>(bm[i].twr)
                                                      : std::nullopt);
    res.rolling.push_back(rolling(months, other, req.rolling_months, "baseline"));
  }
  res.cautions = backtest_cautions();
  return res;
}

}  // namespace keel::backtest
