#include "rules/engine.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <stdexcept>

#include "core/error.h"
#include "ledger/holdings.h"

namespace keel::rules {
namespace {

// Constants parsed once: 1 basis point and 1 percent as fractions.
const Decimal& basis_point() {
  static const Decimal bp = Decimal::parse("0.0001");
  return bp;
}
const Decimal& one_percent() {
  static const Decimal pc = Decimal::parse("0.01");
  return pc;
}

std::string z_text(double z) {
  // Two places for people; "-0.00" reads as a bug, so print it as 0.00.
  const double shown = std::fabs(z) < 0.005 ? 0.0 : z;
  return fmt::format("{:.2f}", shown);
}

std::string pct(const Decimal& fraction) {
  return (fraction * Decimal(100)).fixed(2) + "%";
}

// Linear interpolation between order statistics: numpy.percentile's and
// pandas.Series.quantile's default (Hyndman and Fan, 1996, definition 7).
double percentile(const std::vector<double>& sorted, double pct_value) {
  const double h = (static_cast<double>(sorted.size()) - 1) * pct_value / 100.0;
  const auto lo = static_cast<std::size_t>(std::floor(h));
  if (lo + 1 >= sorted.size()) return sorted.back();
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[lo + 1] - sorted[lo]);
}

}  // namespace

// ----------------------------------------------------------------- screen

std::string Refusal::text(const Rule& rule) const {
  return fmt::format("{}: {}", rule.where(key), why);
}

ScreenResult screen(const Rule& rule, Date as_of, std::vector<Candidate> candidates) {
  ScreenResult out;
  out.as_of = as_of;
  const auto& s = rule.screen;
  std::vector<ScreenLine> pass, rest;
  for (auto& c : candidates) {
    ScreenLine line;
    line.security_id = c.security_id;
    line.symbol = std::move(c.symbol);
    line.figure = c.figure;
    line.held = c.held;
    if (!c.figure) {
      line.excluded_reason = fmt::format("no '{}' figure known on {}", s.metric, as_of.str());
    } else {
      line.age_days = as_of - c.figure->period;
      if (line.age_days > s.max_age_days)
        line.excluded_reason = fmt::format("stale: the figure for {} is {} days old (max {})",
                                           c.figure->period.str(), line.age_days, s.max_age_days);
      else if (s.exclude_non_positive && !c.figure->value.is_positive())
        line.excluded_reason = fmt::format("not positive ({})", c.figure->value.str());
      else if (!c.has_price)
        line.excluded_reason = fmt::format("no close on or before {}", as_of.str());
    }
    if (line.excluded_reason.empty()) {
      line.passed = true;
      line.value = line.figure->value.to_double();
      pass.push_back(std::move(line));
    } else {
      line.note = "out: " + line.excluded_reason;
      rest.push_back(std::move(line));
    }
  }
  out.passed = pass.size();
  // A refused screen keeps its lines (nothing selected), so it can be shown.
  auto refuse = [&](std::string key, std::string why) {
    out.refusal = Refusal{std::move(key), std::move(why)};
    out.selected = 0;
    for (auto& l : pass) l.selected = false;
    std::sort(pass.begin(), pass.end(), [](const ScreenLine& a, const ScreenLine& b) {
      return a.z && b.z && *a.z != *b.z ? *a.z < *b.z : a.symbol < b.symbol;
    });
    std::sort(rest.begin(), rest.end(),
              [](const ScreenLine& a, const ScreenLine& b) { return a.symbol < b.symbol; });
    out.lines = std::move(pass);
    for (auto& l : rest) out.lines.push_back(std::move(l));
    return out;
  };
  if (pass.size() < static_cast<std::size_t>(s.min_names))
    return refuse("screen.min_names",
                  fmt::format("only {} name{} pass{} the screen on {}; the rule needs at least {}",
                              pass.size(), pass.size() == 1 ? "" : "s",
                              pass.size() == 1 ? "es" : "", as_of.str(), s.min_names));

  if (s.winsorize_pct) {
    std::vector<double> sorted;
    for (const auto& l : pass) sorted.push_back(*l.value);
    std::sort(sorted.begin(), sorted.end());
    out.clip_low = percentile(sorted, s.winsorize_pct->first);
    out.clip_high = percentile(sorted, s.winsorize_pct->second);
    for (auto& l : pass) l.value = std::clamp(*l.value, *out.clip_low, *out.clip_high);
  }

  // Two passes (mean, then squared deviations): the textbook sample variance.
  double sum = 0;
  for (const auto& l : pass) sum += *l.value;
  const double n = static_cast<double>(pass.size());
  out.mean = sum / n;
  double ss = 0;
  for (const auto& l : pass) ss += (*l.value - out.mean) * (*l.value - out.mean);
  out.sd = std::sqrt(ss / (n - 1));
  if (!(out.sd > 0))
    return refuse("screen.metric",
                  fmt::format("all {} names passing the screen on {} have the same value; "
                              "z-scores need some spread",
                              pass.size(), as_of.str()));
  const double sign = s.cheap == Cheap::low ? 1.0 : -1.0;
  for (auto& l : pass) l.z = sign * (*l.value - out.mean) / out.sd;
  std::sort(pass.begin(), pass.end(), [](const ScreenLine& a, const ScreenLine& b) {
    return *a.z != *b.z ? *a.z < *b.z : a.symbol < b.symbol;
  });

  // Selection, then the hysteresis band for names already held.
  const auto& sel = rule.selection;
  std::size_t keep = 0;
  if (sel.by == SelectBy::count) keep = static_cast<std::size_t>(sel.count);
  if (sel.by == SelectBy::top_pct) {
    // ceil(top_pct % of n), exact, at least one name.
    const Decimal want = sel.top_pct * Decimal(static_cast<long long>(pass.size()));
    const Decimal q = Decimal::divide(want, Decimal(100), 0);
    keep = static_cast<std::size_t>(std::stoll(q.str()));
    if (Decimal(static_cast<long long>(keep)) * Decimal(100) < want) ++keep;
    keep = std::max<std::size_t>(keep, 1);
  }
  for (std::size_t i = 0; i < pass.size(); ++i) {
    auto& l = pass[i];
    const double z = *l.z;
    bool entered = false;
    std::string test;
    if (sel.by == SelectBy::z) {
      entered = z <= sel.z_max;
      test = fmt::format("z = {} {} {}", z_text(z), entered ? "<=" : ">", z_text(sel.z_max));
    } else {
      entered = i < keep;
      test = fmt::format("z = {}, rank {} {} {}", z_text(z), i + 1, entered ? "<=" : ">", keep);
    }
    if (entered) {
      l.selected = true;
      l.note = test;
    } else if (l.held && sel.exit_z && z <= *sel.exit_z) {
      l.selected = true;
      l.note = fmt::format("held; z = {} <= exit {}", z_text(z), z_text(*sel.exit_z));
    } else if (l.held && sel.exit_z) {
      l.note = fmt::format("held; z = {} > exit {}", z_text(z), z_text(*sel.exit_z));
    } else {
      l.note = test;
    }
    if (l.selected) ++out.selected;
  }
  if (out.selected == 0)
    return refuse("select.z_max",
                  fmt::format("selects no name on {}: the lowest z among the {} names passing "
                              "the screen is {}",
                              as_of.str(), pass.size(), z_text(*pass.front().z)));

  std::sort(rest.begin(), rest.end(),
            [](const ScreenLine& a, const ScreenLine& b) { return a.symbol < b.symbol; });
  out.lines = std::move(pass);
  for (auto& l : rest) out.lines.push_back(std::move(l));
  return out;
}

// ---------------------------------------------------------------- targets

Targets targets(const Rule& rule, const ScreenResult& screened,
                const std::vector<std::int64_t>& sleeve_ids) {
  Targets result;
  if (screened.refusal) {
    result.refusal = screened.refusal;
    return result;
  }
  std::vector<Target>& out = result.list;
  const auto& w = rule.weights;
  for (std::size_t i = 0; i < w.sleeves.size(); ++i)
    out.push_back(Target{sleeve_ids.at(i), w.sleeves[i].symbol, w.sleeves[i].weight, true,
                         std::nullopt, false,
                         fmt::format("sleeve at {}", pct(w.sleeves[i].weight))});

  std::vector<const ScreenLine*> chosen;
  for (const auto& l : screened.lines)
    if (l.selected) chosen.push_back(&l);
  const Decimal share = Decimal(1) - w.sleeve_total();
  const Decimal n(static_cast<long long>(chosen.size()));
  if (n * w.max_weight < share) {
    result.refusal = Refusal{
        "weights.max_weight_pct",
        fmt::format("weights cannot sum to one on {}: {} selected names x {} = {} is less than "
                    "the {} they must fill",
                    screened.as_of.str(), chosen.size(), pct(w.max_weight), pct(n * w.max_weight),
                    pct(share))};
    out.clear();
    return result;
  }

  // Raw weights: equal, or exp(-tilt * z) (a double statistic, brought into
  // Decimal at 12 significant digits; only ratios matter).
  std::vector<Decimal> raw;
  for (const auto* l : chosen)
    raw.push_back(w.scheme == Scheme::equal
                      ? Decimal(1)
                      : Decimal::parse(fmt::format("{:.12e}", std::exp(-w.tilt * *l->z))));
  // Cap and share the excess among the uncapped names in proportion
  // ("water filling"); at most one pass per name.
  std::vector<Decimal> weight(chosen.size());
  std::vector<bool> capped(chosen.size(), false);
  Decimal left = share;
  for (std::size_t round = 0; round <= chosen.size(); ++round) {
    Decimal raw_sum;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i]) raw_sum += raw[i];
    if (raw_sum.is_zero()) break;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i]) weight[i] = Decimal::divide(left * raw[i], raw_sum, 12);
    bool any = false;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i] && weight[i] > w.max_weight) {
        capped[i] = true;
        weight[i] = w.max_weight;
        left -= w.max_weight;
        any = true;
      }
    if (!any) break;
  }
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    std::string why = chosen[i]->note;
    if (capped[i]) why += fmt::format(" (capped at {})", pct(w.max_weight));
    out.push_back(Target{chosen[i]->security_id, chosen[i]->symbol, weight[i], false, chosen[i]->z,
                         chosen[i]->held, why});
  }
  for (const auto& l : screened.lines)
    if (l.held && !l.selected)
      out.push_back(Target{l.security_id, l.symbol, Decimal(), false, l.z, true,
                           l.passed ? l.note : "excluded: " + l.excluded_reason});
  return result;
}

// ----------------------------------------------------------------- orders

std::string_view to_string(Side side) {
  return side == Side::buy ? "buy" : "sell";
}

namespace {

struct Work {
  std::int64_t security_id;
  const Quote* quote;
  const Target* target;  // null: held, not among the targets
  Decimal now_value;
  Decimal target_value;
  Decimal w_now, w_target;
  std::string why;
};

Decimal floor_to(const Decimal& x, const Decimal& step) {
  if (!x.is_positive()) return Decimal();
  return Decimal::divide(x, step, 10).floored(0) * step;
}

// The most units, in whole steps, whose value at `price` is at most `value`.
Decimal units_within(const Decimal& value, const Decimal& price, const Decimal& step) {
  if (!price.is_positive()) return Decimal();
  Decimal q = floor_to(Decimal::divide(value, price, 10), step);
  while (q.is_positive() && q * price > value) q -= step;
  return q;
}

// Compares unit costs c1/q1 > c2/q2 exactly.
bool dearer(const LotState& a, const LotState& b) {
  return a.cost * b.quantity > b.cost * a.quantity;
}

}  // namespace

namespace {

// One plan with the pool's targets set on its value less `fee_guess[a]` for
// each account a (the fees the plan itself is expected to cost).
OrderPlan plan_once(const Portfolio& portfolio, const std::vector<Target>& targets,
                    const Quotes& quotes, const TradingRule& trading, Date as_of,
                    const std::vector<Decimal>& fee_guess) {
  OrderPlan plan;
  auto quote_of = [&](std::int64_t id) -> const Quote& {
    const auto it = quotes.find(id);
    if (it == quotes.end())
      throw std::invalid_argument(fmt::format("rules::orders: no quote for security {}", id));
    return it->second;
  };
  const std::size_t n_accounts = portfolio.accounts.size();

  // Value the pool and set each account's cash reserve on its value after fees.
  std::vector<Decimal> cash, reserve;
  Decimal after_fees;
  for (std::size_t a = 0; a < n_accounts; ++a) {
    const auto& acct = portfolio.accounts[a];
    Decimal value = acct.cash;
    for (const auto& [id, h] : acct.holdings) value += h.quantity * quote_of(id).price;
    plan.pool_value += value;
    const Decimal net = value - fee_guess[a];
    after_fees += net;
    cash.push_back(acct.cash);
    // Money: the reserve is set to the cent, half-to-even.
    reserve.push_back(net.is_positive()
                          ? (net * trading.cash_reserve_pct * one_percent()).rounded(2)
                          : Decimal());
  }
  Decimal reserves;
  for (const auto& r : reserve) reserves += r;
  plan.invested_target = after_fees - reserves;
  if (!plan.pool_value.is_positive()) return plan;

  // Every security the plan touches: targets in their order, then other holdings.
  std::vector<Work> work;
  std::map<std::int64_t, std::size_t> index;
  for (const auto& t : targets) {
    if (index.count(t.security_id)) continue;
    index[t.security_id] = work.size();
    work.push_back(Work{t.security_id, &quote_of(t.security_id), &t, {}, {}, {}, {}, t.why});
  }
  std::map<std::string, std::int64_t> others;
  for (const auto& acct : portfolio.accounts)
    for (const auto& [id, h] : acct.holdings)
      if (!index.count(id) && h.quantity.is_positive()) others[quote_of(id).symbol] = id;
  for (const auto& [symbol, id] : others) {
    index[id] = work.size();
    work.push_back(
        Work{id, &quote_of(id), nullptr, {}, {}, {}, {}, "not among the rule's targets"});
  }
  auto held_in = [&](std::size_t a, std::int64_t id) {
    const auto it = portfolio.accounts[a].holdings.find(id);
    return it == portfolio.accounts[a].holdings.end() ? Decimal() : it->second.quantity;
  };
  for (auto& x : work) {
    Decimal held;
    for (std::size_t a = 0; a < n_accounts; ++a) held += held_in(a, x.security_id);
    x.now_value = held * x.quote->price;
    const Decimal weight = x.target ? x.target->weight : Decimal();
    // Money: a target value is set to the cent.
    x.target_value = (weight * plan.invested_target).rounded(2);
    x.w_now = Decimal::divide(x.now_value, plan.pool_value, 6);
    x.w_target = Decimal::divide(x.target_value, plan.pool_value, 6);
  }

  const Decimal fraction_step = Decimal::parse("0.0001");  // 10^-kFractionPlaces
  auto step_of = [&](const Quote& q) { return trading.fractional ? fraction_step : q.lot_size; };
  auto make_order = [&](const Work& x, std::size_t account, Side side, const Decimal& qty,
                        std::string reason) {
    Order o;
    o.account_id = portfolio.accounts[account].id;
    o.account = portfolio.accounts[account].name;
    o.security_id = x.security_id;
    o.symbol = x.quote->symbol;
    o.side = side;
    o.quantity = qty;
    o.price = x.quote->price;
    o.value = qty * x.quote->price;
    o.fee = trading.fee(o.value);
    o.weight_now = x.w_now;
    o.weight_target = x.w_target;
    o.reason = std::move(reason);
    return o;
  };

  struct Buy {
    const Work* work = nullptr;
    Decimal want;
    std::string reason;
    std::string why_none = "no cash left above the reserve";
    std::map<std::size_t, Order> by_account;
    Decimal bought() const {
      Decimal v;
      for (const auto& [a, o] : by_account) v += o.value;
      return v;
    }
  };
  std::vector<Buy> buys;
  std::vector<Order> sells;

  for (const auto& x : work) {
    const Decimal diff = x.target_value - x.now_value;
    if (diff.is_zero()) continue;
    const bool in_and_staying = x.now_value.is_positive() && x.target_value.is_positive();
    if (!x.quote->tradable) {
      plan.skipped.push_back(
          {x.quote->symbol,
           fmt::format("no close on or before {}; valued at the last trade price, not traded",
                       as_of.str())});
      continue;
    }
    if (in_and_staying) {
      // The drift band applies to names that stay; entries and exits always trade.
      const Decimal gap = (x.w_now - x.w_target).abs();
      const bool pp_on = trading.drift_pct_points.is_positive();
      const bool rel_on = trading.drift_rel_pct.is_positive();
      const bool outside = (!pp_on && !rel_on) ||
                           (pp_on && gap * Decimal(100) > trading.drift_pct_points) ||
                           (rel_on && gap * Decimal(100) > trading.drift_rel_pct * x.w_target);
      if (!outside) {
        plan.skipped.push_back(
            {x.quote->symbol, fmt::format("within the drift band: {} now, target {}", pct(x.w_now),
                                          pct(x.w_target))});
        continue;
      }
    }
    const Decimal step = step_of(*x.quote);
    if (diff.is_positive()) {
      Buy b;
      b.work = &x;
      b.want = diff;
      b.reason = fmt::format("{}: {}", x.why,
                             x.now_value.is_positive() ? "add to target" : "new position");
      buys.push_back(std::move(b));
      continue;
    }
    const bool exit = !x.target_value.is_positive();
    Decimal held;
    for (std::size_t a = 0; a < n_accounts; ++a) held += held_in(a, x.security_id);
    const Decimal qty = exit ? held : std::min(held, units_within(-diff, x.quote->price, step));
    if (!qty.is_positive()) {
      plan.skipped.push_back(
          {x.quote->symbol,
           fmt::format("{} above target is less than one lot ({})", (-diff).fixed(2), step.str())});
      continue;
    }
    if (!exit && qty * x.quote->price < trading.min_trade) {
      plan.skipped.push_back(
          {x.quote->symbol, fmt::format("a sell of {} is below the minimum trade ({})",
                                        (qty * x.quote->price).fixed(2), trading.min_trade.str())});
      continue;
    }
    const std::string reason = fmt::format("{}: {}", x.why, exit ? "sell all" : "trim to target");

    // Lots across the pool's accounts, in the rule's order of preference.
    struct Pick {
      std::size_t account;
      LotState lot;
      bool real;
    };
    std::vector<Pick> picks;
    for (std::size_t a = 0; a < n_accounts; ++a) {
      const auto it = portfolio.accounts[a].holdings.find(x.security_id);
      if (it == portfolio.accounts[a].holdings.end()) continue;
      if (it->second.lots.empty())
        picks.push_back({a, LotState{0, as_of, it->second.quantity, Decimal()}, false});
      for (const auto& lot : it->second.lots) picks.push_back({a, lot, true});
    }
    const Decimal price = x.quote->price;
    auto rank = [&](const Pick& p) {
      if (trading.lot_order != LotOrder::losses_first) return 0;
      if (p.lot.cost > p.lot.quantity * price) return 0;  // at a loss
      return ledger::held_long_term(p.lot.acquired, as_of) ? 1 : 2;
    };
    std::stable_sort(picks.begin(), picks.end(), [&](const Pick& a, const Pick& b) {
      if (a.real != b.real) return a.real;  // lots without detail go last
      if (!a.real) return false;
      if (trading.lot_order == LotOrder::long_held) {
        if (a.lot.acquired != b.lot.acquired) return a.lot.acquired < b.lot.acquired;
        return dearer(a.lot, b.lot);
      }
      if (rank(a) != rank(b)) return rank(a) < rank(b);
      if (dearer(a.lot, b.lot) != dearer(b.lot, a.lot)) return dearer(a.lot, b.lot);
      return a.lot.acquired < b.lot.acquired;
    });
    std::map<std::size_t, Order> by_account;
    Decimal remaining = qty;
    for (const auto& p : picks) {
      if (!remaining.is_positive()) break;
      const Decimal take = std::min(remaining, p.lot.quantity);
      remaining -= take;
      auto [it, fresh] = by_account.try_emplace(p.account);
      if (fresh) it->second = make_order(x, p.account, Side::sell, Decimal(), reason);
      it->second.quantity += take;
      if (p.real) {
        // Basis of the part taken, in proportion, to the cent (as the ledger cuts lots).
        const Decimal cost = take == p.lot.quantity
                                 ? p.lot.cost
                                 : Decimal::divide(p.lot.cost * take, p.lot.quantity, 2);
        it->second.lots.push_back(LotTake{p.lot.lot_id, p.lot.acquired, take, cost,
                                          take * price - cost,
                                          ledger::held_long_term(p.lot.acquired, as_of)});
      }
    }
    for (auto& [a, o] : by_account) {
      o.value = o.quantity * o.price;
      o.fee = trading.fee(o.value);
      cash[a] += o.value - o.fee;
      sells.push_back(std::move(o));
    }
  }

  // Buys: first the cash above the reserves is shared in proportion to what
  // each buy needs; then what rounding left is filled greedily, largest gap
  // first, never past a target. After that no buy can take another lot.
  std::vector<Decimal> spendable;
  Decimal total_spendable;
  for (std::size_t a = 0; a < n_accounts; ++a) {
    spendable.push_back(std::max(Decimal(), cash[a] - reserve[a]));
    total_spendable += spendable.back();
  }
  Decimal need;
  for (const auto& b : buys) need += b.want + trading.fee(b.want);
  const Decimal factor =
      need > total_spendable ? Decimal::divide(total_spendable, need, 12) : Decimal(1);

  // Accounts for a buy: those holding the name (largest holding first), then
  // the others by cash to spend.
  auto account_order = [&](std::int64_t id) {
    std::vector<std::size_t> order;
    for (std::size_t a = 0; a < n_accounts; ++a) order.push_back(a);
    std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t c) {
      const Decimal ha = held_in(a, id), hc = held_in(c, id);
      if (ha != hc) return ha > hc;
      return spendable[a] > spendable[c];
    });
    return order;
  };
  // Adds to `b` in account `a` at most `max_q` units costing at most `budget`
  // (fees included); returns the amount spent. An order's value stays at or
  // above the minimum trade.
  auto add = [&](Buy& b, std::size_t a, const Decimal& budget,
                 const std::optional<Decimal>& max_q) -> Decimal {
    const Work& x = *b.work;
    const Decimal step = step_of(*x.quote);
    const Decimal price = x.quote->price;
    auto it = b.by_account.find(a);
    const Decimal have_q = it == b.by_account.end() ? Decimal() : it->second.quantity;
    const Decimal have_cost =
        it == b.by_account.end() ? Decimal() : it->second.value + it->second.fee;
    const Decimal limit = std::min(budget, spendable[a]);
    // Largest added quantity whose order (value + fee) grows by at most `limit`.
    const Decimal unit = price * (Decimal(1) + trading.fee_bps * basis_point());
    Decimal q =
        floor_to(Decimal::divide(limit + have_cost - trading.fee_fixed, unit, 10), step) - have_q;
    auto grown = [&](const Decimal& add_q) {
      const Decimal v = (have_q + add_q) * price;
      return v + trading.fee(v) - have_cost;
    };
    if (max_q && q > *max_q) q = *max_q;
    while (q.is_positive() && grown(q) > limit) q -= step;
    if (!q.is_positive()) {
      b.why_none = fmt::format("less than one lot ({} at {}) fits the cash to spend", step.str(),
                               price.str());
      return Decimal();
    }
    if ((have_q + q) * price < trading.min_trade) {
      b.why_none = fmt::format("a buy of {} is below the minimum trade ({})",
                               ((have_q + q) * price).fixed(2), trading.min_trade.str());
      return Decimal();
    }
    const Decimal spent = grown(q);
    if (it == b.by_account.end())
      it = b.by_account.emplace(a, make_order(x, a, Side::buy, Decimal(), b.reason)).first;
    it->second.quantity = have_q + q;
    it->second.value = it->second.quantity * price;
    it->second.fee = trading.fee(it->second.value);
    spendable[a] -= spent;
    cash[a] -= spent;
    return spent;
  };
  for (auto& b : buys) {
    Decimal budget = b.want * factor;
    for (std::size_t a : account_order(b.work->security_id)) {
      if (!budget.is_positive()) break;
      if (spendable[a].is_positive()) budget -= add(b, a, budget, std::nullopt);
    }
  }
  // The fill: the gap to target in value, largest first.
  std::vector<std::pair<Decimal, Buy*>> by_gap;
  for (auto& b : buys) by_gap.emplace_back(b.want - b.bought(), &b);
  std::stable_sort(by_gap.begin(), by_gap.end(),
                   [](const auto& a, const auto& b) { return a.first > b.first; });
  for (auto& [gap0, b] : by_gap)
    for (std::size_t a : account_order(b->work->security_id)) {
      // Value left to target; fees come out of the cash, not the target.
      const Decimal gap = b->want - b->bought();
      if (gap < b->work->quote->price * step_of(*b->work->quote)) break;
      if (!spendable[a].is_positive()) continue;
      const Decimal step = step_of(*b->work->quote);
      add(*b, a, spendable[a], units_within(gap, b->work->quote->price, step));
    }

  plan.orders = std::move(sells);
  for (auto& b : buys) {
    if (b.by_account.empty()) plan.skipped.push_back({b.work->quote->symbol, b.why_none});
    for (auto& [a, o] : b.by_account) plan.orders.push_back(std::move(o));
  }

  // The result.
  Decimal traded;
  for (const auto& o : plan.orders) {
    plan.estimated_fees += o.fee;
    traded += o.value;
  }
  plan.turnover = Decimal::divide(traded, plan.pool_value * Decimal(2), 6);
  const Portfolio after = rules::apply(portfolio, plan.orders);
  const Decimal pool_after = plan.pool_value - plan.estimated_fees;
  for (std::size_t a = 0; a < after.accounts.size(); ++a) {
    plan.cash_after.push_back({after.accounts[a].name, after.accounts[a].cash, reserve[a]});
    plan.cash_after_total += after.accounts[a].cash;
  }
  for (const auto& x : work) {
    Decimal value;
    for (const auto& acct : after.accounts)
      if (auto it = acct.holdings.find(x.security_id); it != acct.holdings.end())
        value += it->second.quantity * x.quote->price;
    if (value.is_zero() && x.target_value.is_zero()) continue;
    plan.weights_after.push_back(
        {x.security_id, x.quote->symbol, value,
         pool_after.is_positive() ? Decimal::divide(value, pool_after, 6) : Decimal(), x.w_target});
  }
  return plan;
}

}  // namespace

OrderPlan orders(const Portfolio& portfolio, const std::vector<Target>& targets,
                 const Quotes& quotes, const TradingRule& trading, Date as_of) {
  // Targets are set on the pool as it will stand after this plan's own fees,
  // so that posting the orders and proposing again finds nothing to do. The
  // fees depend on the orders, so iterate to a fixed point (a few rounds;
  // the last plan is used if it has not settled).
  std::vector<Decimal> guess(portfolio.accounts.size());
  OrderPlan plan = plan_once(portfolio, targets, quotes, trading, as_of, guess);
  for (int round = 0; round < 8; ++round) {
    std::vector<Decimal> fees(portfolio.accounts.size());
    for (const auto& o : plan.orders)
      for (std::size_t a = 0; a < portfolio.accounts.size(); ++a)
        if (portfolio.accounts[a].id == o.account_id) fees[a] += o.fee;
    if (fees == guess) break;
    guess = std::move(fees);
    plan = plan_once(portfolio, targets, quotes, trading, as_of, guess);
  }
  return plan;
}

Portfolio apply(const Portfolio& portfolio, const std::vector<Order>& orders) {
  Portfolio out = portfolio;
  for (auto& a : out.accounts)
    for (auto& [id, h] : a.holdings) h.lots.clear();
  for (const auto& o : orders) {
    auto it = std::find_if(out.accounts.begin(), out.accounts.end(),
                           [&](const AccountState& a) { return a.id == o.account_id; });
    if (it == out.accounts.end())
      throw std::invalid_argument(fmt::format("rules::apply: no account {}", o.account_id));
    auto& h = it->holdings[o.security_id];
    if (o.side == Side::buy) {
      h.quantity += o.quantity;
      it->cash -= o.value + o.fee;
    } else {
      if (o.quantity > h.quantity)
        throw std::invalid_argument(fmt::format("rules::apply: selling {} of {}, holding {}",
                                                o.quantity.str(), o.symbol, h.quantity.str()));
      h.quantity -= o.quantity;
      it->cash += o.value - o.fee;
      if (h.quantity.is_zero()) it->holdings.erase(o.security_id);
    }
  }
  return out;
}

}  // namespace keel::rules
