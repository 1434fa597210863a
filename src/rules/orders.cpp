// rules::orders() and rules::apply(), in the named steps of
// rules/order_steps.h.
#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <optional>
#include <set>
#include <stdexcept>
#include <string_view>
#include <unordered_map>
#include <unordered_set>

#include "ledger/holdings.h"
#include "rules/engine.h"
#include "rules/order_rounds.h"
#include "rules/order_steps.h"

namespace keel::rules {

std::string_view to_string(Side side) {
  return side == Side::buy ? "buy" : "sell";
}

namespace steps {
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

std::string pct(const Decimal& fraction) {
  return (fraction * Decimal(100)).fixed(2) + "%";
}

const Quote& quote_of(const Quotes& quotes, std::int64_t id) {
  const auto it = quotes.find(id);
  if (it == quotes.end())
    throw std::invalid_argument(fmt::format("rules::orders: no quote for security {}", id));
  return it->second;
}

Decimal held_in(const Portfolio& portfolio, std::size_t a, std::int64_t id) {
  const auto& holdings = portfolio.accounts[a].holdings;
  const auto it = holdings.find(id);
  return it == holdings.end() ? Decimal() : it->second.quantity;
}

Decimal floor_to(const Decimal& x, const Decimal& step) {
  if (!x.is_positive()) return Decimal();
  // Whole units (the usual lot): x to 10 places divided by 1 is x itself.
  static const Decimal one(1);
  if (step == one && x.scale() <= 10) return x.floored(0);
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

// Sets a new order `o` (built where it is kept: an order is large) for
// name x in an account, with no quantity yet.
void start_order(Order& o, const Work& x, const Portfolio& portfolio, std::size_t account,
                 Side side, std::string reason) {
  o.account_id = portfolio.accounts[account].id;
  o.account = portfolio.accounts[account].name;
  o.security_id = x.security_id;
  o.symbol = x.quote->symbol;
  o.side = side;
  o.price = x.quote->price;
  o.weight_now = x.w_now;
  o.weight_target = x.w_target;
  o.reason = std::move(reason);
}

Order make_order(const Work& x, const Portfolio& portfolio, std::size_t account, Side side,
                 const Decimal& qty, std::string reason, const TradingRule& trading) {
  Order o;
  start_order(o, x, portfolio, account, side, std::move(reason));
  o.quantity = qty;
  o.value = qty * x.quote->price;
  o.fee = trading.fee(o.value);
  return o;
}

bool taxable(const AccountState& a) {
  return a.tax == TaxStatus::taxable;
}

// The units of a lot, in whole steps and at most `units`, whose estimated
// gain at `price` keeps the net gain within `room`.
Decimal within_gain(const LotState& lot, const Decimal& units, const Decimal& price,
                    const Decimal& step, const Decimal& room) {
  auto gain = [&](const Decimal& q) { return q * price - cost_share(lot.cost, q, lot.quantity); };
  if (gain(units) <= room) return units;
  if (!room.is_positive()) return Decimal();
  // The lot gains per unit (about price - unit cost): start near the answer, step down.
  const Decimal per_unit = price - Decimal::divide(lot.cost, lot.quantity, 10);
  Decimal q = std::min(units, floor_to(Decimal::divide(room, per_unit, 10), step));
  while (q.is_positive() && gain(q) > room) q -= step;
  return q;
}

std::string tax_words(const AccountState& a) {
  return fmt::format("sold in {}: no tax event", a.name);
}

std::string cap_words(const AccountState& a, const Decimal& cap) {
  return fmt::format("kept in {}: the gain cap of {} is reached", a.name, cap.fixed(2));
}

}  // namespace

Decimal step_of(const Quote& quote, const TradingRule& trading) {
  static const Decimal fraction_step = Decimal::parse("0.0001");  // 10^-kFractionPlaces
  return trading.fractional ? fraction_step : quote.lot_size;
}

// Each account's value at the quotes: cash and holdings. The fee guesses do
// not change it, so orders() computes it once for all its rounds.
std::vector<Decimal> account_values(const Portfolio& portfolio, const Quotes& quotes) {
  std::vector<Decimal> values;
  values.reserve(portfolio.accounts.size());
  for (const auto& acct : portfolio.accounts) {
    Decimal value = acct.cash;
    for (const auto& [id, h] : acct.holdings) value += h.quantity * quote_of(quotes, id).price;
    values.push_back(std::move(value));
  }
  return values;
}

PoolValue pool_of(const Portfolio& portfolio, const std::vector<Decimal>& values,
                  const TradingRule& trading, const std::vector<Decimal>& fee_guess) {
  PoolValue pool;
  Decimal after_fees, reserves;
  pool.cash.reserve(values.size());
  pool.reserve.reserve(values.size());
  for (std::size_t a = 0; a < values.size(); ++a) {
    pool.value += values[a];
    const Decimal net = values[a] - fee_guess[a];
    after_fees += net;
    pool.cash.push_back(portfolio.accounts[a].cash);
    // Money: the reserve is set to the cent, half-to-even.
    pool.reserve.push_back(net.is_positive()
                               ? (net * trading.cash_reserve_pct * one_percent()).rounded(2)
                               : Decimal());
    reserves += pool.reserve.back();
  }
  pool.invested_target = after_fees - reserves;
  return pool;
}

bool TargetIds::has(std::int64_t id) const {
  return std::binary_search(sorted.begin(), sorted.end(), id);
}

TargetIds target_ids(const std::vector<Target>& targets) {
  TargetIds ids;
  ids.sorted.reserve(targets.size());
  for (const auto& t : targets) ids.sorted.push_back(t.security_id);
  std::sort(ids.sorted.begin(), ids.sorted.end());
  ids.repeats = std::adjacent_find(ids.sorted.begin(), ids.sorted.end()) != ids.sorted.end();
  return ids;
}

// The work list without the targets' values: what the fee guesses do not change.
std::vector<Work> work_names(const Portfolio& portfolio, const std::vector<Target>& targets,
                             const Quotes& quotes, const Decimal& pool_value) {
  std::vector<Work> work;
  // Room for every name at once: a Work is large, and a second allocation
  // would move every name already listed.
  std::size_t holdings = 0;
  for (const auto& acct : portfolio.accounts) holdings += acct.holdings.size();
  work.reserve(targets.size() + holdings);
  const TargetIds listed = target_ids(targets);
  std::unordered_set<std::int64_t> seen;  // with repeats only
  for (const auto& t : targets) {
    if (listed.repeats && !seen.insert(t.security_id).second) continue;
    Work& w = work.emplace_back();
    w.security_id = t.security_id;
    w.quote = &quote_of(quotes, t.security_id);
    w.target = &t;
    w.why = t.why;
  }
  std::map<std::string_view, std::int64_t> others;  // by symbol
  for (const auto& acct : portfolio.accounts)
    for (const auto& [id, h] : acct.holdings)
      if (h.quantity.is_positive() && !listed.has(id)) others[quote_of(quotes, id).symbol] = id;
  for (const auto& [symbol, id] : others) {
    Work& w = work.emplace_back();
    w.security_id = id;
    w.quote = &quote_of(quotes, id);
    w.why = "not among the rule's targets";
  }
  for (auto& x : work) {
    if (portfolio.accounts.size() == 1) {
      x.held = held_in(portfolio, 0, x.security_id);
    } else {
      for (std::size_t a = 0; a < portfolio.accounts.size(); ++a)
        x.held += held_in(portfolio, a, x.security_id);
    }
    if (x.held.is_zero()) continue;  // nothing held: worth nothing, of no weight
    x.now_value = x.held * x.quote->price;
    if (!x.now_value.is_zero()) x.w_now = Decimal::divide(x.now_value, pool_value, 6);
  }
  return work;
}

// Sets each name's target value and weight on the pool's invested target.
// A target value that did not change keeps its weight (no division). Names
// of one weight (an equal-weight rule gives it to all its targets) have one
// target value, and names of one target value one weight: each is worked
// out once for a run of such names, and copied.
bool aim(std::vector<Work>& work, const PoolValue& pool, bool fresh) {
  bool changed = fresh;
  const Decimal* weight = nullptr;  // the last weight multiplied, and its product:
  Decimal weighed;
  bool divided = false;  // the last target value divided, and its quotient:
  Decimal value_divided, quotient;
  for (auto& x : work) {
    Decimal value;
    if (x.target) {
      if (!weight || !(*weight == x.target->weight)) {
        weight = &x.target->weight;
        // Money: a target value is set to the cent.
        weighed = Decimal::times_rounded(*weight, pool.invested_target, 2);
      }
      value = weighed;
    }
    if (!fresh && value == x.target_value) continue;
    changed = true;
    if (value.is_zero()) {
      x.w_target = Decimal();
    } else {
      if (!divided || !(value == value_divided)) {
        quotient = Decimal::divide(value, pool.value, 6);
        value_divided = value;
        divided = true;
      }
      x.w_target = quotient;
    }
    x.target_value = std::move(value);
  }
  return changed;
}

PoolValue value_pool(const Portfolio& portfolio, const Quotes& quotes, const TradingRule& trading,
                     const std::vector<Decimal>& fee_guess) {
  return pool_of(portfolio, account_values(portfolio, quotes), trading, fee_guess);
}

std::vector<Work> work_list(const Portfolio& portfolio, const std::vector<Target>& targets,
                            const Quotes& quotes, const PoolValue& pool) {
  std::vector<Work> work = work_names(portfolio, targets, quotes, pool.value);
  aim(work, pool, true);
  return work;
}

Decision decide(const Work& x, const TradingRule& trading, Date as_of, Explain explain) {
  Decision d;
  Decimal diff = x.target_value - x.now_value;  // moved into a buy
  if (diff.is_zero()) return d;
  const bool words = explain == Explain::all;
  // Reasons are formatted only when they are shown. Every path returns `d`
  // itself, so it is built in place.
  auto skip = [&](auto why) {
    d.kind = Decision::Kind::skip;
    if (words) d.why = why();
  };
  if (!x.quote->tradable) {
    skip([&] {
      return fmt::format("no close on or before {}; valued at the last trade price, not traded",
                         as_of.str());
    });
    return d;
  }
  if (x.now_value.is_positive() && x.target_value.is_positive()) {
    // The drift band applies to names that stay; entries and exits always trade.
    const bool pp_on = trading.drift_pct_points.is_positive();
    const bool rel_on = trading.drift_rel_pct.is_positive();
    bool outside = !pp_on && !rel_on;
    if (!outside) {
      const Decimal gap_pct = (x.w_now - x.w_target).abs() * Decimal(100);
      outside = (pp_on && gap_pct > trading.drift_pct_points) ||
                (rel_on && gap_pct > trading.drift_rel_pct * x.w_target);
    }
    if (!outside) {
      skip([&] {
        return fmt::format("within the drift band: {} now, target {}", pct(x.w_now),
                           pct(x.w_target));
      });
      return d;
    }
  }
  if (diff.is_positive()) {
    d.kind = Decision::Kind::buy;
    d.buy_value = std::move(diff);
    if (words)
      d.reason = fmt::format("{}: {}", x.why,
                             x.now_value.is_positive() ? "add to target" : "new position");
    return d;
  }
  const Decimal step = step_of(*x.quote, trading);
  const bool exit = !x.target_value.is_positive();
  const Decimal qty = exit ? x.held : std::min(x.held, units_within(-diff, x.quote->price, step));
  if (!qty.is_positive()) {
    skip([&] {
      return fmt::format("{} above target is less than one lot ({})", (-diff).fixed(2), step.str());
    });
    return d;
  }
  if (!exit && qty * x.quote->price < trading.min_trade) {
    skip([&] {
      return fmt::format("a sell of {} is below the minimum trade ({})",
                         (qty * x.quote->price).fixed(2), trading.min_trade.str());
    });
    return d;
  }
  d.kind = Decision::Kind::sell;
  d.sell_units = qty;
  if (words) d.reason = fmt::format("{}: {}", x.why, exit ? "sell all" : "trim to target");
  return d;
}

std::vector<Order> sell_orders(const Work& x, const Decimal& units, const std::string& reason,
                               const Portfolio& portfolio, const TradingRule& trading, Date as_of,
                               SellTax* tax) {
  std::vector<Order> out;
  sell_orders(x, units, reason, portfolio, trading, as_of, tax, out);
  return out;
}

void sell_orders(const Work& x, const Decimal& units, const std::string& reason,
                 const Portfolio& portfolio, const TradingRule& trading, Date as_of, SellTax* tax,
                 std::vector<Order>& out) {
  const HouseholdPrefs* prefs = tax ? tax->prefs : nullptr;
  // One account holding the name, without lot detail: one order of the
  // units, at most what it holds (the general path below, without its lists).
  if (portfolio.accounts.size() == 1) {
    const auto it = portfolio.accounts[0].holdings.find(x.security_id);
    if (it != portfolio.accounts[0].holdings.end() && it->second.lots.empty()) {
      if (!units.is_positive()) return;
      Order& o = out.emplace_back();
      start_order(o, x, portfolio, 0, Side::sell, reason);
      o.quantity = std::min(units, it->second.quantity);
      o.value = o.quantity * o.price;
      o.fee = trading.fee(o.value);
      if (prefs && prefs->tax_keys() && !reason.empty() && !taxable(portfolio.accounts[0]))
        o.reason += "; " + tax_words(portfolio.accounts[0]);
      return;
    }
  }
  // Lots across the pool's accounts, in the rule's order of preference.
  struct Pick {
    std::size_t account;
    LotState lot;
    bool real;
  };
  std::vector<Pick> picks;
  for (std::size_t a = 0; a < portfolio.accounts.size(); ++a) {
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
  // Accounts that must give cash they lack sell first, then (with the key)
  // accounts that are not taxable.
  auto account_rank = [&](const Pick& p) {
    const auto& acct = portfolio.accounts[p.account];
    if (prefs && acct.cash.is_negative() && prefs->must_give.count(acct.id)) return 0;
    return prefs && prefs->sell_deferred_first && taxable(acct) ? 2 : 1;
  };
  auto before = [&](const Pick& a, const Pick& b) {
    if (account_rank(a) != account_rank(b)) return account_rank(a) < account_rank(b);
    if (a.real != b.real) return a.real;  // lots without detail go last
    if (!a.real) return false;
    if (trading.lot_order == LotOrder::long_held) {
      if (a.lot.acquired != b.lot.acquired) return a.lot.acquired < b.lot.acquired;
      return dearer(a.lot, b.lot);
    }
    if (rank(a) != rank(b)) return rank(a) < rank(b);
    if (dearer(a.lot, b.lot) != dearer(b.lot, a.lot)) return dearer(a.lot, b.lot);
    return a.lot.acquired < b.lot.acquired;
  };
  // One pick (one account, no lot detail) needs no sorting, nor its buffer.
  if (picks.size() > 1) std::stable_sort(picks.begin(), picks.end(), before);
  const Decimal step = step_of(*x.quote, trading);
  std::map<std::size_t, Order> by_account;
  std::map<std::size_t, Decimal> kept;  // units the gain cap kept, by account
  Decimal remaining = units;
  for (const auto& p : picks) {
    if (!remaining.is_positive()) break;
    Decimal take = std::min(remaining, p.lot.quantity);
    const bool capped =
        prefs && prefs->gain_cap && p.real && taxable(portfolio.accounts[p.account]);
    if (capped) {
      const Decimal fits = within_gain(p.lot, take, price, step, *prefs->gain_cap - tax->gain_used);
      if (fits < take) kept[p.account] += take - fits;
      take = fits;
      if (!take.is_positive()) continue;
    }
    remaining -= take;
    auto [it, fresh] = by_account.try_emplace(p.account);
    if (fresh)
      it->second = make_order(x, portfolio, p.account, Side::sell, Decimal(), reason, trading);
    it->second.quantity += take;
    if (p.real) {
      // Basis of the part taken, exactly as the ledger will cut the lot.
      const Decimal cost = cost_share(p.lot.cost, take, p.lot.quantity);
      it->second.lots.push_back(LotTake{p.lot.lot_id, p.lot.acquired, take, cost,
                                        take * price - cost,
                                        ledger::held_long_term(p.lot.acquired, as_of)});
      if (tax && taxable(portfolio.accounts[p.account])) tax->gain_used += take * price - cost;
    }
  }
  for (auto& [a, o] : by_account) {
    o.value = o.quantity * o.price;
    o.fee = trading.fee(o.value);
    const auto& acct = portfolio.accounts[a];
    if (prefs && prefs->tax_keys() && !reason.empty()) {
      if (!taxable(acct))
        o.reason += "; " + tax_words(acct);
      else if (const auto k = kept.find(a); k != kept.end())
        o.reason += fmt::format("; {} {}", k->second.str(), cap_words(acct, *prefs->gain_cap));
    }
    out.push_back(std::move(o));
  }
  if (tax && !reason.empty())
    for (const auto& [a, q] : kept)
      if (!by_account.count(a))
        tax->kept.push_back(
            {x.quote->symbol, fmt::format("{} units {}", q.str(),
                                          cap_words(portfolio.accounts[a], *prefs->gain_cap))});
}

bool raise_cash(std::size_t a, const std::vector<Work>& work, const Portfolio& portfolio,
                const TradingRule& trading, Date as_of, std::vector<Order>& orders,
                std::vector<Decimal>& cash, SellTax& tax, Explain explain,
                const std::set<std::int64_t>& bought) {
  const auto& acct = portfolio.accounts[a];
  const HouseholdPrefs* prefs = tax.prefs;
  // Lots of the account not already sold, with the overweight of their name.
  struct Pick {
    const Work* work;
    LotState lot;  // what is left of it
    Decimal overweight;
  };
  std::vector<Pick> picks;
  for (const auto& x : work) {
    const auto it = acct.holdings.find(x.security_id);
    if (it == acct.holdings.end() || !x.quote->tradable) continue;
    std::map<std::int64_t, Decimal> sold;
    for (const auto& o : orders)
      if (o.account_id == acct.id && o.security_id == x.security_id)
        for (const auto& l : o.lots) sold[l.lot_id] += l.quantity;
    for (auto lot : it->second.lots) {
      const Decimal left = lot.quantity - sold[lot.lot_id];
      if (!left.is_positive()) continue;
      lot.cost = lot.cost - cost_share(lot.cost, sold[lot.lot_id], lot.quantity);
      lot.quantity = left;
      picks.push_back({&x, lot, x.w_now - x.w_target});
    }
  }
  auto rank = [&](const Pick& p) {
    if (p.lot.cost > p.lot.quantity * p.work->quote->price) return 0;  // at a loss
    return ledger::held_long_term(p.lot.acquired, as_of) ? 1 : 2;
  };
  auto by_tax = [&](const Pick& l, const Pick& r) {
    if (rank(l) != rank(r)) return rank(l) < rank(r);
    if (l.overweight != r.overweight) return l.overweight > r.overweight;
    return l.lot.acquired < r.lot.acquired;
  };
  auto is_bought = [&](const Pick& p) { return bought.count(p.work->security_id) > 0; };
  // Units of a name the proposal sells so far, in every account.
  auto sold_units = [&](const Work& x) {
    Decimal q;
    for (const auto& o : orders)
      if (o.security_id == x.security_id && o.side == Side::sell) q += o.quantity;
    return q;
  };
  const bool words = explain == Explain::all;
  const Decimal short_by = -cash[a];
  // Sells at most `limit` units of the pick's lot, the fewest that cover the shortfall.
  auto take = [&](Pick& p, const Decimal& limit) {
    const Work& x = *p.work;
    const Decimal price = x.quote->price;
    const Decimal step = step_of(*x.quote, trading);
    auto it = std::find_if(orders.begin(), orders.end(), [&](const Order& o) {
      return o.account_id == acct.id && o.security_id == x.security_id && o.side == Side::sell;
    });
    const Decimal have = it == orders.end() ? Decimal() : it->quantity;
    auto net = [&](const Decimal& q) {  // cash the order brings, after its fee
      const Decimal v = (have + q) * price;
      return v - trading.fee(v);
    };
    const Decimal before = have.is_positive() ? net(Decimal()) : Decimal();
    // The fewest whole steps that cover the shortfall, at most the lot.
    Decimal q =
        std::min(p.lot.quantity, floor_to(Decimal::divide(-cash[a], price, 10), step) + step);
    while (q > step && net(q - step) - before >= -cash[a]) q -= step;
    while (q + step <= p.lot.quantity && net(q) - before < -cash[a]) q += step;
    q = std::min(q, limit);
    const bool capped = prefs->gain_cap && taxable(acct);
    if (capped) {
      const Decimal fits = within_gain(p.lot, q, price, step, *prefs->gain_cap - tax.gain_used);
      if (fits < q && words)
        tax.kept.push_back({x.quote->symbol, fmt::format("{} units {}", (q - fits).str(),
                                                         cap_words(acct, *prefs->gain_cap))});
      q = fits;
    }
    if (!q.is_positive() || net(q) - before <= Decimal()) return;
    if (it == orders.end()) {
      std::string reason;
      if (words) {
        reason = fmt::format("{}: sold to raise the cash {} must give ({} short)", x.why, acct.name,
                             short_by.fixed(2));
        if (prefs->tax_keys() && !taxable(acct)) reason += "; " + tax_words(acct);
      }
      orders.push_back(make_order(x, portfolio, a, Side::sell, Decimal(), reason, trading));
      it = std::prev(orders.end());
    } else if (words) {
      it->reason += fmt::format("; {} more to raise the cash {} must give", q.str(), acct.name);
    }
    const Decimal cost = cost_share(p.lot.cost, q, p.lot.quantity);
    it->lots.push_back(LotTake{p.lot.lot_id, p.lot.acquired, q, cost, q * price - cost,
                               ledger::held_long_term(p.lot.acquired, as_of)});
    if (taxable(acct)) tax.gain_used += q * price - cost;
    cash[a] += net(q) - before;
    it->quantity = have + q;
    it->value = it->quantity * price;
    it->fee = trading.fee(it->value);
    p.lot.cost -= cost;
    p.lot.quantity -= q;
  };
  // First what stands above target, of names the proposal does not buy: the
  // raise then does the rebalance's work and nothing it sells is bought back.
  std::stable_sort(picks.begin(), picks.end(), by_tax);
  for (auto& p : picks) {
    if (!cash[a].is_negative()) break;
    if (is_bought(p) || !p.lot.quantity.is_positive()) continue;
    const Work& x = *p.work;
    const Decimal above = (x.held - sold_units(x)) * x.quote->price - x.target_value;
    const Decimal limit =
        floor_to(Decimal::divide(above, x.quote->price, 10), step_of(*x.quote, trading));
    if (limit.is_positive()) take(p, limit);
  }
  // Then, when nothing above target is left, below target: names the
  // proposal does not buy first.
  std::stable_sort(picks.begin(), picks.end(), [&](const Pick& l, const Pick& r) {
    if (is_bought(l) != is_bought(r)) return is_bought(r);
    return by_tax(l, r);
  });
  for (auto& p : picks) {
    if (!cash[a].is_negative()) break;
    if (p.lot.quantity.is_positive()) take(p, p.lot.quantity);
  }
  return !cash[a].is_negative();
}

namespace {

// buy_orders(), with each name's buy cost taken from `costs` (in the order of
// `work`) for the wishes whose name is in `work`, and worked out here for the
// others; the orders are added to `orders`, and the skips to `skipped` when
// it is given.
void buy_orders_at(const std::vector<BuyWish>& wishes, const Portfolio& portfolio,
                   std::vector<Decimal>& cash, const std::vector<Decimal>& reserve,
                   const TradingRule& trading, Explain explain, const HouseholdPrefs& prefs,
                   const std::vector<Work>* work, const std::vector<BuyCost>* costs,
                   std::vector<Order>& orders, std::vector<Skipped>* skipped) {
  const bool words = explain == Explain::all;
  auto placed = [&](std::int64_t id) { return prefs.place_deferred.count(id) > 0; };
  auto deferred = [&](std::size_t a) {
    return portfolio.accounts[a].tax == TaxStatus::tax_deferred;
  };
  // The proportional fee as a fraction, multiplied once: `fee` is
  // TradingRule::fee with it, the same exact product, so the same cents.
  const Decimal fee_rate = trading.fee_bps * basis_point();
  auto fee = [&](const Decimal& value) {
    return value.is_zero() ? Decimal() : (trading.fee_fixed + value * fee_rate).rounded(2);
  };
  // What a buy has in one account so far (its order, once `made`): the
  // orders themselves are built once, at the end, where they are kept.
  struct Fill {
    Decimal quantity, value, fee;
    bool made = false;
  };
  struct Buy {
    const BuyWish* wish = nullptr;
    const Decimal* price = nullptr;  // the quote's
    const BuyCost* cost = nullptr;   // the name's, or one worked out here
    std::string why_none;            // empty: no cash left above the reserve
    Fill* fills = nullptr;           // one per account, in account order
    Decimal bought;                  // the value of its fills
    Decimal gap;                     // in the fill: value left to target
    bool placed = false;             // in tax-deferred accounts first
    bool any = false;                // an order in some account
  };
  const std::size_t n_accounts = portfolio.accounts.size();
  std::vector<Fill> fills(wishes.size() * n_accounts);
  // The cost given for a wish's name, if any.
  auto given = [&](const BuyWish& w) -> const BuyCost* {
    if (!work || !costs || work->empty() || w.work < work->data() ||
        w.work >= work->data() + work->size())
      return nullptr;
    return &(*costs)[static_cast<std::size_t>(w.work - work->data())];
  };
  // Costs for the names without one given; reserved first, so the pointers
  // to them stay valid.
  std::vector<BuyCost> own;
  own.reserve(static_cast<std::size_t>(std::count_if(
      wishes.begin(), wishes.end(), [&](const BuyWish& w) { return given(w) == nullptr; })));
  std::vector<Buy> buys(wishes.size());
  for (std::size_t i = 0; i < wishes.size(); ++i) {
    Buy& b = buys[i];
    b.wish = &wishes[i];
    b.fills = fills.data() + i * n_accounts;
    const Work& x = *wishes[i].work;
    b.price = &x.quote->price;
    b.placed = placed(x.security_id);
    b.cost = given(wishes[i]);
    if (!b.cost) {
      own.push_back(buy_cost(*x.quote, trading));
      b.cost = &own.back();
    }
  }

  // First the cash above the reserves is shared in proportion to what each
  // buy needs; then what rounding left is filled greedily, largest gap
  // first, never past a target. After that no buy can take another lot.
  std::vector<Decimal> spendable;
  Decimal total_spendable;
  for (std::size_t a = 0; a < n_accounts; ++a) {
    const auto withheld = prefs.withheld.find(portfolio.accounts[a].id);
    spendable.push_back(std::max(
        Decimal(),
        cash[a] - reserve[a] - (withheld == prefs.withheld.end() ? Decimal() : withheld->second)));
    total_spendable += spendable.back();
  }
  // Every amount spent comes out of both an account's cash and its cash to
  // spend: the cash is brought down once, at the end, by what was spent.
  const std::vector<Decimal> spendable_before = spendable;
  auto any_spendable = [&] {
    return std::any_of(spendable.begin(), spendable.end(),
                       [](const Decimal& s) { return s.is_positive(); });
  };
  Decimal need;
  for (const auto& w : wishes) need += w.want + fee(w.want);
  // The share of what it wants each buy may spend at first: all of it when
  // the cash covers every buy, else the same fraction for each.
  const bool cash_short = need > total_spendable;
  const Decimal factor = cash_short ? Decimal::divide(total_spendable, need, 12) : Decimal(1);

  // Accounts for a buy: those holding the name (largest holding first), then
  // the others by cash to spend. The list is reused: read it before asking again.
  std::vector<std::size_t> accounts;
  auto account_order = [&](const Buy& b) -> const std::vector<std::size_t>& {
    accounts.clear();
    for (std::size_t a = 0; a < n_accounts; ++a) accounts.push_back(a);
    if (n_accounts == 1) return accounts;
    const bool place = b.placed;
    const std::int64_t id = b.wish->work->security_id;
    std::stable_sort(accounts.begin(), accounts.end(), [&](std::size_t a, std::size_t c) {
      if (place && deferred(a) != deferred(c)) return deferred(a);
      const Decimal ha = held_in(portfolio, a, id), hc = held_in(portfolio, c, id);
      if (ha != hc) return ha > hc;
      return spendable[a] > spendable[c];
    });
    return accounts;
  };
  auto less_than_a_lot = [&](Buy& b) {
    if (words)
      b.why_none = fmt::format("less than one lot ({} at {}) fits the cash to spend",
                               b.cost->step.str(), b.price->str());
    return Decimal();
  };
  // Adds to `b` in account `a` at most `max_q` units costing at most `budget`
  // (fees included); returns the amount spent. An order's value stays at or
  // above the minimum trade.
  auto add = [&](Buy& b, std::size_t a, const Decimal& budget,
                 const std::optional<Decimal>& max_q) -> Decimal {
    const Decimal& step = b.cost->step;
    const Decimal& price = *b.price;
    Fill& fill = b.fills[a];
    const bool fresh = !fill.made;
    // std::min's choice, without a copy: read before spendable[a] changes.
    const Decimal& limit = spendable[a] < budget ? spendable[a] : budget;
    // What the order costs so far (nothing for a fresh one) and what it may
    // cost before its fixed fee. A fresh order adds no zeros.
    Decimal have_cost, room;
    if (fresh) {
      room = limit - trading.fee_fixed;
    } else {
      have_cost = fill.value + fill.fee;
      room = limit + have_cost - trading.fee_fixed;
    }
    // Nothing held yet and cash less the fixed fee below 0.999 of a step:
    // the quotient below is then under 0.999 + 10^-4 steps, so no step fits.
    if (fresh && b.cost->no_step_below && room < *b.cost->no_step_below) return less_than_a_lot(b);
    // Largest added quantity whose order (value + fee) grows by at most `limit`.
    Decimal q = floor_to(Decimal::divide(room, b.cost->unit, 10), step);
    if (!fresh) q -= fill.quantity;
    if (max_q && q > *max_q) q = *max_q;
    // The order's value, fee and growth at the last quantity tried: the loop
    // ends on the quantity that fits.
    Decimal value, order_fee, spent;
    auto grows_past = [&](const Decimal& add_q) {
      value = (fresh ? add_q : fill.quantity + add_q) * price;
      order_fee = fee(value);
      spent = value + order_fee;
      if (!fresh) spent -= have_cost;
      return spent > limit;
    };
    while (q.is_positive() && grows_past(q)) q -= step;
    if (!q.is_positive()) return less_than_a_lot(b);
    if (value < trading.min_trade) {
      if (words)
        b.why_none = fmt::format("a buy of {} is below the minimum trade ({})", value.fixed(2),
                                 trading.min_trade.str());
      return Decimal();
    }
    b.any = true;
    if (fresh) {
      fill.made = true;
      fill.quantity = std::move(q);
      b.bought += value;
    } else {
      fill.quantity += q;
      b.bought += value - fill.value;
    }
    fill.value = std::move(value);
    fill.fee = std::move(order_fee);
    spendable[a] -= spent;
    return spent;
  };
  // Names placed in tax-deferred accounts buy first, so the cash there is theirs.
  std::vector<Buy*> turn;
  turn.reserve(buys.size());
  for (auto& b : buys) turn.push_back(&b);
  std::stable_partition(turn.begin(), turn.end(), [](const Buy* b) { return b->placed; });
  for (Buy* bp : turn) {
    Buy& b = *bp;
    Decimal budget = cash_short ? b.wish->want * factor : b.wish->want;
    const auto& order = account_order(b);
    for (std::size_t i = 0; i < order.size(); ++i) {
      const std::size_t a = order[i];
      if (!budget.is_positive()) break;
      if (!spendable[a].is_positive()) continue;
      const Decimal spent = add(b, a, budget, std::nullopt);
      if (i + 1 < order.size()) budget -= spent;  // the last account leaves it unread
    }
  }
  // The fill: the gap to target in value, largest first. A buy's gap is
  // still what it was here when its turn comes (only its own orders change
  // it), so a gap below one step's value, which would stop at once, is left
  // out; and with no cash to spend in any account nothing is filled.
  if (any_spendable()) {
    // Value left to target; fees come out of the cash, not the target.
    std::vector<Buy*> by_gap;
    by_gap.reserve(buys.size());
    for (auto& b : buys) {
      b.gap = b.wish->want - b.bought;
      if (b.gap >= b.cost->one_step) by_gap.push_back(&b);
    }
    std::stable_sort(by_gap.begin(), by_gap.end(), [](const Buy* l, const Buy* r) {
      if (l->placed != r->placed) return l->placed;
      return l->gap > r->gap;
    });
    for (Buy* b : by_gap) {
      const Decimal& one_step = b->cost->one_step;
      for (std::size_t a : account_order(*b)) {
        if (b->gap < one_step) break;
        if (!spendable[a].is_positive()) continue;
        add(*b, a, spendable[a], units_within(b->gap, *b->price, b->cost->step));
        b->gap = b->wish->want - b->bought;
      }
      if (!any_spendable()) break;  // no later buy could add anything
    }
  }
  for (std::size_t a = 0; a < n_accounts; ++a)
    if (spendable[a] != spendable_before[a]) cash[a] -= spendable_before[a] - spendable[a];

  orders.reserve(orders.size() + buys.size());
  if (skipped) skipped->reserve(skipped->size() + buys.size());
  for (auto& b : buys) {
    if (!b.any && skipped)
      skipped->push_back({b.wish->work->quote->symbol, !words ? std::string()
                                                       : b.why_none.empty()
                                                           ? "no cash left above the reserve"
                                                           : std::move(b.why_none)});
    for (std::size_t a = 0; a < n_accounts; ++a) {
      Fill& f = b.fills[a];
      if (!f.made) continue;
      Order& o = orders.emplace_back();
      start_order(o, *b.wish->work, portfolio, a, Side::buy, b.wish->reason);
      o.quantity = std::move(f.quantity);
      o.value = std::move(f.value);
      o.fee = std::move(f.fee);
      if (words && b.placed)
        o.reason += deferred(a)
                        ? fmt::format("; placed in {}: tax-deferred first", o.account)
                        : fmt::format("; placed in {}: no tax-deferred cash left", o.account);
    }
  }
}

}  // namespace

Buys buy_orders(const std::vector<BuyWish>& wishes, const Portfolio& portfolio,
                std::vector<Decimal>& cash, const std::vector<Decimal>& reserve,
                const TradingRule& trading, Explain explain, const HouseholdPrefs& prefs) {
  Buys out;
  buy_orders_at(wishes, portfolio, cash, reserve, trading, explain, prefs, nullptr, nullptr,
                out.orders, &out.skipped);
  return out;
}

void rebuy_after_raise(const std::vector<Work>& work, const std::vector<Order>& orders,
                       const std::vector<Decimal>& before, const TradingRule& trading,
                       std::vector<BuyWish>& wishes, std::vector<Skipped>& skipped,
                       Explain explain) {
  const bool words = explain == Explain::all;
  for (const auto& x : work) {
    Decimal sold;
    const Order* raise = nullptr;  // the first order the raise made or added to
    for (std::size_t i = 0; i < orders.size(); ++i) {
      const Order& o = orders[i];
      if (o.security_id != x.security_id || o.side != Side::sell) continue;
      sold += o.quantity;
      if (!raise && (i >= before.size() || o.quantity > before[i])) raise = &o;
    }
    if (!raise) continue;
    const Decimal gap = x.target_value - (x.held - sold) * x.quote->price;
    if (gap < x.quote->price * step_of(*x.quote, trading)) continue;
    const std::string why =
        words ? fmt::format(
                    "also what {} sells to raise the cash it must give: it holds nothing "
                    "else above target",
                    raise->account)
              : std::string();
    const auto w =
        std::find_if(wishes.begin(), wishes.end(), [&](const BuyWish& b) { return b.work == &x; });
    if (w != wishes.end()) {
      w->want = gap;
      if (words) w->reason += "; " + why;
      continue;
    }
    wishes.push_back({&x, gap, words ? fmt::format("{}: bought again, {}", x.why, why) : ""});
    std::erase_if(skipped, [&](const Skipped& k) { return k.symbol == x.quote->symbol; });
  }
}

void summarize(OrderPlan& plan, const Portfolio& portfolio, const std::vector<Work>& work,
               const PoolValue& pool) {
  Decimal traded;
  for (const auto& o : plan.orders) {
    plan.estimated_fees += o.fee;
    traded += o.value;
  }
  plan.turnover = Decimal::divide(traded, plan.pool_value * Decimal(2), 6);
  // The orders applied as rules::apply() applies them, without a copy of the
  // portfolio: each account's cash, and each name's units bought less sold.
  // A name's value after is then (units held + moved) x price: exactly the
  // sum of its value in each account.
  std::vector<Decimal> cash;
  cash.reserve(portfolio.accounts.size());
  for (const auto& acct : portfolio.accounts) cash.push_back(acct.cash);
  std::unordered_map<std::int64_t, Decimal> moved;  // by security
  moved.reserve(plan.orders.size());
  for (const auto& o : plan.orders) {
    std::size_t a = 0;
    while (a < portfolio.accounts.size() && portfolio.accounts[a].id != o.account_id) ++a;
    if (a == portfolio.accounts.size())
      throw std::invalid_argument(fmt::format("rules::apply: no account {}", o.account_id));
    Decimal& units = moved[o.security_id];
    if (o.side == Side::buy) {
      units += o.quantity;
      cash[a] -= o.value + o.fee;
    } else {
      units -= o.quantity;
      cash[a] += o.value - o.fee;
    }
  }
  const Decimal pool_after = plan.pool_value - plan.estimated_fees;
  for (std::size_t a = 0; a < portfolio.accounts.size(); ++a) {
    plan.cash_after.push_back({portfolio.accounts[a].name, cash[a], pool.reserve[a]});
    plan.cash_after_total += cash[a];
  }
  for (const auto& x : work) {
    const auto m = moved.find(x.security_id);
    const Decimal value = (m == moved.end() ? x.held : x.held + m->second) * x.quote->price;
    if (value.is_zero() && x.target_value.is_zero()) continue;
    plan.weights_after.push_back(
        {x.security_id, x.quote->symbol, value,
         pool_after.is_positive() ? Decimal::divide(value, pool_after, 6) : Decimal(), x.w_target});
  }
}

}  // namespace steps

BuyCost buy_cost(const Quote& quote, const TradingRule& trading) {
  static const Decimal almost_one = Decimal::parse("0.999");
  static const Decimal smallest_quick_step = Decimal::parse("0.000001");
  BuyCost c;
  c.step = steps::step_of(quote, trading);
  // A unit's cost with the proportional fee, as a multiple of its price.
  c.unit = quote.price * (Decimal(1) + trading.fee_bps * steps::basis_point());
  c.one_step = quote.price * c.step;
  // Cash less the fixed fee below 0.999 of a step's cost: the quotient in
  // buy_orders() is then under 0.999 + 10^-4 steps, so no step fits.
  if (c.step >= smallest_quick_step && c.unit.is_positive())
    c.no_step_below = c.unit * c.step * almost_one;
  return c;
}

namespace {

// A plan before its summary (steps::summarize), with the pool the summary
// needs: only the last of the rounds below is summarized.
struct Draft {
  OrderPlan plan;
  steps::PoolValue pool;
  bool summarize = false;  // false: an empty pool, nothing to summarize
};

// What a step of each name of the work list costs (buy_cost), the same in
// every round: worked out the first time a round buys the name, since most
// rounds buy only some of the names they touch.
class StepCosts {
 public:
  StepCosts(const std::vector<steps::Work>& work, const TradingRule& trading)
      : work_(work), trading_(trading), costs_(work.size()), known_(work.size(), 0) {}
  // The costs, with those of the names in `wishes` worked out.
  const std::vector<BuyCost>& of(const std::vector<steps::BuyWish>& wishes) {
    for (const auto& w : wishes) {
      // A wish for a name outside the list gets its cost in buy_orders().
      if (w.work < work_.data() || w.work >= work_.data() + work_.size()) continue;
      const auto i = static_cast<std::size_t>(w.work - work_.data());
      if (known_[i]) continue;
      costs_[i] = buy_cost(*w.work->quote, trading_);
      known_[i] = 1;
    }
    return costs_;
  }

 private:
  const std::vector<steps::Work>& work_;
  const TradingRule& trading_;
  std::vector<BuyCost> costs_;  // by position in the work list
  std::vector<char> known_;     // 1: costs_ holds the name's cost
};

// One plan on `pool` (steps::pool_of on the fees the plan itself is
// expected to cost), with `work`, the names the plan touches, aimed at it
// (steps::aim). The plan depends on the fee guess only through the pool's
// reserves and the work's target values and weights. `skips`: list the
// names skipped (orders_only() lists none).
Draft plan_once(const Portfolio& portfolio, steps::PoolValue pool,
                const std::vector<steps::Work>& work, StepCosts& costs, const TradingRule& trading,
                Date as_of, Explain explain, const HouseholdPrefs& prefs, bool skips) {
  Draft draft;
  OrderPlan& plan = draft.plan;
  draft.pool = std::move(pool);
  plan.pool_value = draft.pool.value;
  plan.invested_target = draft.pool.invested_target;
  if (!plan.pool_value.is_positive()) return draft;
  steps::PoolValue& pool_now = draft.pool;
  std::vector<steps::BuyWish> wishes;
  wishes.reserve(work.size());
  plan.orders.reserve(work.size());
  steps::SellTax tax{&prefs, Decimal(), {}};
  for (const auto& x : work) {
    auto d = steps::decide(x, trading, as_of, explain);
    switch (d.kind) {
      case steps::Decision::Kind::none:
        break;
      case steps::Decision::Kind::skip:
        if (skips) plan.skipped.push_back({x.quote->symbol, std::move(d.why)});
        break;
      case steps::Decision::Kind::buy: {
        // Built in place: a wish moved would move its reason twice.
        steps::BuyWish& w = wishes.emplace_back();
        w.work = &x;
        w.want = std::move(d.buy_value);
        w.reason = std::move(d.reason);
        break;
      }
      case steps::Decision::Kind::sell: {
        const std::size_t first = plan.orders.size();
        steps::sell_orders(x, d.sell_units, d.reason, portfolio, trading, as_of, &tax, plan.orders);
        for (std::size_t k = first; k < plan.orders.size(); ++k) {
          const Order& o = plan.orders[k];
          for (std::size_t a = 0; a < portfolio.accounts.size(); ++a)
            if (portfolio.accounts[a].id == o.account_id) pool_now.cash[a] += o.value - o.fee;
        }
        break;
      }
    }
  }
  // Accounts that must give more cash than they hold after the sells raise
  // it; without them nothing is raised and nothing is bought back.
  std::vector<std::size_t> short_of_cash;
  for (std::size_t a = 0; a < portfolio.accounts.size(); ++a)
    if (pool_now.cash[a].is_negative() && prefs.must_give.count(portfolio.accounts[a].id))
      short_of_cash.push_back(a);
  if (!short_of_cash.empty()) {
    std::set<std::int64_t> bought;
    for (const auto& w : wishes) bought.insert(w.work->security_id);
    std::vector<Decimal> before_raise;
    for (const auto& o : plan.orders) before_raise.push_back(o.quantity);
    for (const std::size_t a : short_of_cash)
      steps::raise_cash(a, work, portfolio, trading, as_of, plan.orders, pool_now.cash, tax,
                        explain, bought);
    steps::rebuy_after_raise(work, plan.orders, before_raise, trading, wishes, plan.skipped,
                             explain);
  }
  if (skips)
    for (auto& k : tax.kept) plan.skipped.push_back(std::move(k));
  steps::buy_orders_at(wishes, portfolio, pool_now.cash, pool_now.reserve, trading, explain, prefs,
                       &work, &costs.of(wishes), plan.orders, skips ? &plan.skipped : nullptr);
  draft.summarize = true;
  return draft;
}

// orders() and orders_only(): with `summary` false the last plan is not
// summarized and lists no skips.
OrderPlan plan_orders(const Portfolio& portfolio, const std::vector<Target>& targets,
                      const Quotes& quotes, const TradingRule& trading, Date as_of, Explain explain,
                      const HouseholdPrefs& prefs, bool summary) {
  // Targets are set on the pool as it will stand after this plan's own fees,
  // so that posting the orders and proposing again finds nothing to do. The
  // fees depend on the orders, so iterate to a fixed point (a few rounds;
  // the last plan is used if it has not settled). The pool's value and the
  // names it touches do not depend on the fees: they are found once.
  const std::vector<Decimal> values = steps::account_values(portfolio, quotes);
  Decimal pool_value;
  for (const auto& v : values) pool_value += v;
  std::vector<steps::Work> work;
  if (pool_value.is_positive()) {
    work = steps::work_names(portfolio, targets, quotes, pool_value);
  }
  StepCosts costs(work, trading);
  std::vector<Decimal> guess(portfolio.accounts.size());
  steps::PoolValue pool = steps::pool_of(portfolio, values, trading, guess);
  if (pool.value.is_positive()) steps::aim(work, pool, true);
  Draft draft =
      plan_once(portfolio, std::move(pool), work, costs, trading, as_of, explain, prefs, summary);
  for (int round = 0; round < 8; ++round) {
    std::vector<Decimal> fees(portfolio.accounts.size());
    for (const auto& o : draft.plan.orders)
      for (std::size_t a = 0; a < portfolio.accounts.size(); ++a)
        if (portfolio.accounts[a].id == o.account_id) fees[a] += o.fee;
    if (fees == guess) break;
    guess = std::move(fees);
    pool = steps::pool_of(portfolio, values, trading, guess);
    // A round whose reserves and target values are the last round's plans
    // the same orders, whose fees are then the guess it was given: the
    // rounds have settled on the last plan, with this pool's invested target.
    const bool same_reserves = pool.reserve == draft.pool.reserve;
    const bool aimed_anew = pool.value.is_positive() && steps::aim(work, pool, false);
    if (same_reserves && !aimed_anew) {
      draft.plan.invested_target = pool.invested_target;
      draft.pool.invested_target = std::move(pool.invested_target);
      break;
    }
    draft =
        plan_once(portfolio, std::move(pool), work, costs, trading, as_of, explain, prefs, summary);
  }
  if (summary && draft.summarize) steps::summarize(draft.plan, portfolio, work, draft.pool);
  return std::move(draft.plan);
}

}  // namespace

OrderPlan orders(const Portfolio& portfolio, const std::vector<Target>& targets,
                 const Quotes& quotes, const TradingRule& trading, Date as_of, Explain explain,
                 const HouseholdPrefs& prefs) {
  return plan_orders(portfolio, targets, quotes, trading, as_of, explain, prefs, true);
}

OrderPlan orders_only(const Portfolio& portfolio, const std::vector<Target>& targets,
                      const Quotes& quotes, const TradingRule& trading, Date as_of, Explain explain,
                      const HouseholdPrefs& prefs) {
  return plan_orders(portfolio, targets, quotes, trading, as_of, explain, prefs, false);
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
