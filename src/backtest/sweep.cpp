#include "backtest/sweep.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <set>
#include <span>

#include "backtest/backtest.h"
#include "core/error.h"
#include "core/text.h"

namespace keel::backtest {
namespace {

constexpr std::string_view kVary = "--vary";

struct Month {
  Date first, last;
};

std::string variant_label(const std::vector<std::string>& keys,
                          const std::vector<std::string>& values) {
  std::string out;
  for (std::size_t i = 0; i < keys.size(); ++i)
    out += fmt::format("{}{}={}", i ? ", " : "", keys[i], printable(values[i]));
  return out;
}

// Every combination of the axes' values, the first axis slowest.
std::vector<std::vector<std::string>> grid(const std::vector<Axis>& axes) {
  std::vector<std::vector<std::string>> out{{}};
  for (const auto& axis : axes) {
    std::vector<std::vector<std::string>> next;
    for (const auto& row : out)
      for (const auto& v : axis.values) {
        next.push_back(row);
        next.back().push_back(v);
      }
    out = std::move(next);
  }
  return out;
}

double compound(const std::vector<double>& monthly, std::size_t from, std::size_t to) {
  double growth = 1;
  for (std::size_t i = from; i < to; ++i) growth *= 1 + monthly[i];
  return growth - 1;
}

std::optional<double> sharpe_of(const std::vector<double>& monthly, std::size_t from,
                                std::size_t to) {
  return perf::sharpe_ratio(std::span(monthly).subspan(from, to - from));
}

// The index of the highest Sharpe ratio (the first on ties), undefined ones last.
std::optional<std::size_t> best_of(const std::vector<std::optional<double>>& sharpes) {
  std::optional<std::size_t> best;
  for (std::size_t i = 0; i < sharpes.size(); ++i)
    if (sharpes[i] && (!best || *sharpes[i] > *sharpes[*best])) best = i;
  return best;
}

Request base_request(const SweepRequest& sr) {
  Request req;
  req.from = sr.from;
  req.to = sr.to;
  req.start_value = sr.start_value;
  req.frictionless = sr.frictionless;
  req.keep_trades = false;
  req.baseline = false;
  return req;
}

// Refuses a walk-forward that cannot be scored, before any data is read.
void check_walk_forward(const SweepRequest& sr) {
  if (!sr.walk_forward) return;
  const auto [in, out] = *sr.walk_forward;
  const int t = (sr.to.year() - sr.from.year()) * 12 + sr.to.month() - sr.from.month() + 1;
  if (in < 2)
    throw InputError(fmt::format(
        "--walk-forward: an in-sample window of {} month{} cannot be scored; the Sharpe ratio of "
        "monthly returns needs at least 2 months",
        in, in == 1 ? "" : "s"));
  if (out < 1)
    throw InputError(fmt::format(
        "--walk-forward: the out-of-sample window must be at least 1 month, not {}", out));
  if (in >= t)
    throw InputError(fmt::format(
        "--walk-forward: the period {} to {} has {} month{}; an in-sample window of {} months "
        "leaves none out of sample",
        sr.from.str(), sr.to.str(), t, t == 1 ? "" : "s", in));
}

WalkForwardResult walk_forward(const History& h, const std::vector<rules::Rule>& rules,
                               const SweepRequest& sr, const std::vector<Month>& months,
                               SweepResult& res) {
  const auto [in, out] = *sr.walk_forward;
  const std::size_t t = months.size();
  WalkForwardResult wf;
  wf.in_months = in;
  wf.out_months = out;
  Decimal value = sr.start_value;
  const auto in_n = static_cast<std::size_t>(in), out_n = static_cast<std::size_t>(out);
  for (std::size_t start = 0; start + in_n < t; start += out_n) {
    const std::size_t out_begin = start + in_n, out_end = std::min(t, out_begin + out_n);
    std::vector<std::optional<double>> scores;
    for (const auto& v : res.variants) scores.push_back(sharpe_of(v.monthly, start, out_begin));
    WalkWindow w;
    w.in_from = std::max(sr.from, months[start].first);
    w.in_to = months[out_begin - 1].last;
    w.out_from = months[out_begin].first;
    w.out_to = months[out_end - 1].last;
    w.chosen = best_of(scores).value_or(0);
    w.in_sharpe = scores[w.chosen];
    w.out_start = value;
    const auto& rule = rules[w.chosen];
    const auto& days = h.market.trading_days();
    const bool trades = !rebalance_days(days, h.market.next_trading_day(), w.out_from, w.out_to,
                                        rule.rebalance_months)
                             .empty();
    if (trades) {
      Request req = base_request(sr);
      req.from = w.out_from;
      req.to = w.out_to;
      req.start_value = value;
      const Result r = run(h, rule, req);
      for (const auto& m : r.rule.perf.months) wf.monthly.push_back(m.twr);
      value = r.rule.perf.closing_value;
    } else {
      res.notes.push_back(
          fmt::format("walk-forward {} to {}: no rebalancing day in the window; the pool held cash",
                      w.out_from.str(), w.out_to.str()));
      for (std::size_t i = out_begin; i < out_end; ++i) wf.monthly.push_back(0);
    }
    w.out_end = value;
    w.out_return = w.out_end.to_double() / w.out_start.to_double() - 1;
    wf.windows.push_back(w);
  }
  wf.out_from = wf.windows.front().out_from;
  wf.out_to = wf.windows.back().out_to;
  wf.twr = value.to_double() / sr.start_value.to_double() - 1;
  wf.sharpe = perf::sharpe_ratio(wf.monthly);
  if (res.best) {
    const auto& best = res.variants[*res.best].monthly;
    wf.best_twr = compound(best, in_n, t);
    wf.best_sharpe = sharpe_of(best, in_n, t);
  }
  return wf;
}

}  // namespace

Axis parse_axis(std::string_view text) {
  const auto eq = text.find('=');
  if (eq == std::string_view::npos || eq == 0 || eq + 1 == text.size())
    throw InputError(fmt::format(
        "--vary: '{}' is not KEY=VALUE,VALUE,... (e.g. select.count=5,10,20)", printable(text)));
  Axis axis;
  axis.key = std::string(text.substr(0, eq));
  std::string item;
  int depth = 0;
  char quote = 0;
  const auto finish = [&] {
    if (item.empty())
      throw InputError(fmt::format("--vary: '{}' has an empty value", printable(text)));
    axis.values.push_back(item);
    item.clear();
  };
  for (const char c : text.substr(eq + 1)) {
    if (quote) {
      if (c == quote) quote = 0;
    } else if (c == '"' || c == '\'') {
      quote = c;
    } else if (c == '[') {
      ++depth;
    } else if (c == ']') {
      --depth;
    } else if (c == ',' && depth == 0) {
      finish();
      continue;
    }
    item += c;
  }
  finish();
  return axis;
}

std::vector<HalfSharpes> half_sharpes(const SweepResult& r) {
  std::vector<HalfSharpes> out;
  for (const auto& v : r.variants) {
    const std::span<const double> all(v.monthly);
    const std::size_t half = all.size() / 2;
    out.push_back({perf::sharpe_ratio(all.first(half)), perf::sharpe_ratio(all.subspan(half))});
  }
  return out;
}

std::vector<std::string> sweep_cautions() {
  return {
      "The best of many variants is expected to do worse out of sample than it did here: it was "
      "chosen because it fitted this past, and some of that fit is luck. The deflated Sharpe "
      "ratio and the PBO estimate how much.",
      "Past results do not predict future ones. This is the output of your own rule on your own "
      "data, not investment advice.",
      "Costs, taxes, spreads and fills in life differ from the simulation's; taxes are not "
      "modelled (ask your tax authority or a licensed professional).",
  };
}

std::vector<rules::Rule> sweep_variants(const rules::Rule& rule, const SweepRequest& sr) {
  std::set<std::string> keys;
  std::size_t count = 1;
  for (const auto& axis : sr.axes) {
    if (axis.key.starts_with("scope.") || axis.key == "screen.metric")
      throw InputError(fmt::format(
          "--vary {}: a sweep reads the market data once, for the rule's own universe and "
          "metric; sweep each {} in a run of its own",
          printable(axis.key), axis.key.starts_with("scope.") ? "scope" : "metric"));
    if (!keys.insert(axis.key).second)
      throw InputError(fmt::format("--vary: '{}' is given twice; list all its values once",
                                   printable(axis.key)));
    std::set<std::string> seen;
    for (const auto& v : axis.values)
      if (!seen.insert(v).second)
        throw InputError(
            fmt::format("--vary {}: '{}' is listed twice", printable(axis.key), printable(v)));
    count *= axis.values.size();
    if (count > sr.max_variants) break;
  }
  if (count > sr.max_variants) {
    std::size_t total = 1;
    for (const auto& axis : sr.axes) total *= axis.values.size();
    throw InputError(fmt::format(
        "--vary: {} variants is more than {}; the more variants are tried, the more the best "
        "one owes to luck. Give --max-variants {} to run them all",
        total, sr.max_variants, total));
  }
  std::vector<rules::Rule> out;
  for (const auto& values : grid(sr.axes)) {
    rules::Rule r = rule;
    for (std::size_t i = 0; i < values.size(); ++i)
      r = rules::with_setting(r, sr.axes[i].key, values[i], kVary);
    out.push_back(std::move(r));
  }
  return out;
}

SweepResult sweep(store::Database& db, const rules::Rule& rule, const SweepRequest& request) {
  if (request.from > request.to)
    throw InputError(
        fmt::format("--from: {} is after --to {}", request.from.str(), request.to.str()));
  if (!request.start_value.is_positive())
    throw InputError(fmt::format("--start-value: {} is not above zero", request.start_value.str()));
  check_walk_forward(request);
  // The grid is checked before any data is read; the one load covers every
  // variant (a longer track record reaches further back).
  const auto variants = sweep_variants(rule, request);
  const History h =
      load_history(db, variants, request.from.plus_days(-1), request.to, {}, rules::Convert::yes);
  return sweep(h, rule, request);
}

SweepResult sweep(const History& h, const rules::Rule& rule, const SweepRequest& sr) {
  check_walk_forward(sr);
  const auto rules = sweep_variants(rule, sr);
  SweepResult res;
  res.rule_name = rule.name;
  res.from = sr.from;
  res.to = sr.to;
  res.start_value = sr.start_value;
  res.frictionless = sr.frictionless;
  for (const auto& a : sr.axes) res.keys.push_back(a.key);
  res.notes = h.notes;
  const auto values = grid(sr.axes);
  const Request req = base_request(sr);
  std::vector<Month> months;
  std::vector<std::optional<double>> sharpes;
  for (std::size_t i = 0; i < rules.size(); ++i) {
    const Result r = run(h, rules[i], req);
    const auto& p = r.rule.perf;
    if (i == 0)
      for (const auto& m : p.months) {
        months.push_back(Month{m.first, m.last});
        res.months.push_back(fmt::format("{:04}-{:02}", m.year, m.month));
      }
    VariantRun v;
    v.values = values[i];
    for (const auto& m : p.months) v.monthly.push_back(m.twr);
    v.sharpe = perf::sharpe_ratio(v.monthly);
    v.twr = p.twr.period;
    v.twr_annualized = p.twr.annualized;
    v.volatility = p.risk.monthly_volatility;
    if (p.risk.max_drawdown) v.max_drawdown = p.risk.max_drawdown->depth;
    v.turnover_per_year = r.rule.turnover_per_year;
    v.end_value = p.closing_value;
    for (const auto& d : r.rule.rebalances)
      if (d.no_selection) ++v.cash_days;
    if (v.cash_days > 0)
      res.notes.push_back(
          fmt::format("{}: nothing selected on {} rebalancing day{}; the pool held cash then",
                      variant_label(res.keys, v.values), v.cash_days, v.cash_days == 1 ? "" : "s"));
    sharpes.push_back(v.sharpe);
    res.variants.push_back(std::move(v));
    if (sr.progress) sr.progress(i + 1, rules.size());
  }

  res.best = best_of(sharpes);
  if (res.best) {
    std::vector<double> defined;
    for (const auto& s : sharpes)
      if (s) defined.push_back(*s);
    res.deflated = perf::deflated_sharpe(res.variants[*res.best].monthly, defined);
    if (!res.deflated)
      res.notes.push_back(
          "deflated Sharpe ratio: not defined for the best variant's returns (their skew and "
          "kurtosis leave no standard error)");
  } else {
    res.notes.push_back(
        "no variant has a Sharpe ratio (each held cash throughout or had fewer than 2 months)");
  }
  const int blocks = perf::pbo_blocks(static_cast<int>(months.size()));
  if (res.variants.size() < 2)
    res.notes.push_back("PBO: needs at least 2 variants to choose among");
  else if (blocks == 0)
    res.notes.push_back(
        fmt::format("PBO: needs at least 4 months of returns; the period has {}", months.size()));
  else {
    std::vector<std::vector<double>> columns;
    for (const auto& v : res.variants) columns.push_back(v.monthly);
    res.pbo = perf::pbo(columns, blocks);
  }
  if (sr.walk_forward) res.walk_forward = walk_forward(h, rules, sr, months, res);
  res.cautions = sweep_cautions();
  return res;
}

}  // namespace keel::backtest
