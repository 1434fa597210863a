#include "rules/fx_orders.h"

#include <fmt/format.h>

#include <algorithm>
#include <tuple>

#include "core/currency.h"
#include "core/error.h"
#include "core/text.h"
#include "rules/inputs.h"

namespace keel::rules {

void require_rates(const std::vector<Account>& pool, const std::string& currency,
                   const market::View& view, Date day) {
  for (const auto& a : pool)
    if (!view.try_rate(a.currency, currency, day))
      throw InputError(fmt::format(
          "account '{}' keeps {} and the proposal is valued in {}: {}; "
          "import one with 'keel import fx FILE.csv'",
          printable(a.name), a.currency, currency, no_rate_text(a.currency, currency, day)));
}

FxPool fx_pool(const Book& book, const std::vector<Account>& pool, const std::string& currency,
               const market::View& view, Date day, std::set<std::int64_t>& held,
               std::vector<std::string>& notes) {
  require_rates(pool, currency, view, day);
  FxPool out;
  for (const auto& a : pool) {
    const auto in_pool = [&](const Decimal& amount, const std::string& from) {
      return view.convert(amount, from, currency, day);
    };
    AccountState st;
    st.id = a.id;
    st.name = a.name;
    const auto& ab = book.account(a.id);
    std::map<std::string, Decimal> cash{{a.currency, ab.cash}};
    st.cash = in_pool(ab.cash, a.currency);
    if (a.currency != currency) out.converted = true;
    for (const auto& [code, lots] : ab.foreign_cash) {
      const Decimal units = ab.foreign_balance(code);
      if (units.is_zero()) continue;
      out.converted = true;
      if (!view.try_rate(code, currency, day)) {
        notes.push_back(fmt::format("{} {} of cash in '{}' is left out and not spent: {}",
                                    units.str(), code, printable(a.name),
                                    no_rate_text(code, currency, day)));
        continue;
      }
      st.cash += in_pool(units, code);
      cash[code] += units;
    }
    for (const auto& [id, pos] : ab.positions) {
      HoldingState h;
      h.quantity = pos.quantity();
      for (const auto& lot : pos.lots)
        h.lots.push_back(
            LotState{lot.lot_id, lot.acquired, lot.quantity, in_pool(lot.cost, a.currency)});
      if (h.quantity.is_positive()) held.insert(id);
      st.holdings[id] = std::move(h);
    }
    out.portfolio.accounts.push_back(std::move(st));
    out.currency.push_back(a.currency);
    out.cash.push_back(std::move(cash));
  }
  return out;
}

void plan_cash(FxPool& pool, std::vector<PlannedCash>& planned, HouseholdPrefs& prefs,
               const std::string& currency, const market::View& view, Date day) {
  for (auto& c : planned)
    for (std::size_t a = 0; a < pool.portfolio.accounts.size(); ++a) {
      auto& st = pool.portfolio.accounts[a];
      if (st.name != c.account) continue;
      const std::string& own = pool.currency[a];
      c.currency = own;
      const Decimal in_pool = view.convert(c.amount, own, currency, day);
      if (own != currency) {
        c.converted = in_pool;
        c.into = currency;
      }
      pool.cash[a][own] += c.amount;
      st.cash += in_pool;
      if (in_pool.is_negative()) prefs.must_give[st.id] -= in_pool;
    }
}

namespace {

struct Settlement {
  std::vector<Conversion> conversions;
  // Each account's own cash at the end, in its units, and all of its cash in
  // the pool's currency.
  std::vector<Decimal> own_after, after;
};

Settlement settle(OrderPlan& plan, const FxPool& pool, const Quotes& quotes,
                  const std::string& currency, const TradingRule& trading, const market::View& view,
                  Date day) {
  auto cash = pool.cash;
  const auto& accounts = pool.portfolio.accounts;
  auto index_of = [&](std::int64_t account_id) {
    const auto it = std::find_if(accounts.begin(), accounts.end(),
                                 [&](const AccountState& a) { return a.id == account_id; });
    return static_cast<std::size_t>(it - accounts.begin());
  };
  // One conversion per account and pair, in the order they first arise.
  std::vector<std::tuple<std::size_t, Conversion>> out;
  auto convert = [&](std::size_t a, const std::string& from, const std::string& to,
                     const Decimal& amount, const Decimal& about) {
    for (auto& [at, c] : out)
      if (at == a && c.from == from && c.to == to) {
        c.amount += amount;
        c.about += about;
        return;
      }
    out.emplace_back(a, Conversion{accounts[a].name, from, to, amount, about,
                                   view.rate(from, to, day).describe(), Decimal()});
  };

  for (auto& o : plan.orders) {
    const std::size_t a = index_of(o.account_id);
    const std::string& own = pool.currency[a];
    const Quote& q = quotes.at(o.security_id);
    const std::string local = q.fx ? q.fx->currency : currency;
    Order::Fx fx;
    fx.quote = q.fx ? *q.fx : QuoteFx{currency, o.price, Decimal(1), false, ""};
    fx.local_value = o.quantity * fx.quote.local_price;
    // Fees are estimated in the pool's currency and paid in the account's.
    cash[a][own] -= view.convert(o.fee, currency, own, day);
    if (o.side == Side::sell) {
      cash[a][local] += fx.local_value;
      fx.from_cash = fx.local_value;
    } else if (local == own) {
      cash[a][own] -= fx.local_value;
      fx.from_cash = fx.local_value;
    } else {
      Decimal& there = cash[a][local];
      fx.from_cash = std::min(std::max(there, Decimal()), fx.local_value);
      there -= fx.from_cash;
      fx.local_settled = fx.local_value - fx.from_cash;
      if (fx.local_settled.is_positive()) {
        fx.settled = view.convert(fx.local_settled, local, own, day);
        fx.settles_in = own;
        cash[a][own] -= fx.settled;
        convert(a, own, local, fx.local_settled, fx.settled);
      }
    }
    if (local != currency || local != own) o.fx = std::move(fx);
  }

  // An account's own cash spent past zero is covered from its other cash.
  for (std::size_t a = 0; a < accounts.size(); ++a) {
    const std::string& own = pool.currency[a];
    for (auto& [code, units] : cash[a]) {
      if (!cash[a][own].is_negative()) break;
      if (code == own || !units.is_positive() || !view.try_rate(code, own, day)) continue;
      const Decimal need = -cash[a][own];
      const Decimal from = std::min(view.convert(need, own, code, day), units);
      const Decimal got = view.convert(from, code, own, day);
      units -= from;
      cash[a][own] += got;
      convert(a, code, own, got, from);
    }
  }

  Settlement settled;
  for (auto& [a, c] : out) {
    c.fee = trading.fee(view.convert(c.amount, c.to, currency, day));
    plan.estimated_fees += c.fee;
    plan.cash_after_total -= c.fee;
    for (auto& after : plan.cash_after)
      if (after.account == c.account) after.cash -= c.fee;
    const std::string& own = pool.currency[a];
    cash[a][own] -= view.convert(c.fee, currency, own, day);
    settled.conversions.push_back(std::move(c));
  }
  for (std::size_t a = 0; a < accounts.size(); ++a) {
    settled.own_after.push_back(cash[a][pool.currency[a]]);
    Decimal all;
    for (const auto& [code, units] : cash[a])
      if (view.try_rate(code, currency, day)) all += view.convert(units, code, currency, day);
    settled.after.push_back(all);
  }
  return settled;
}

}  // namespace

FxOrders fx_orders(const FxPool& pool, const std::vector<Target>& targets, const Quotes& quotes,
                   const std::string& currency, const TradingRule& trading,
                   const market::View& view, Date day, HouseholdPrefs prefs,
                   std::vector<std::string>& notes) {
  const auto& accounts = pool.portfolio.accounts;
  // The smallest amount of the pool's currency: what a short account gives
  // up at least each round, so the rounds always move.
  const Decimal step = Decimal::scaled(1, minor_units(currency));
  FxOrders out;
  for (int round = 0;; ++round) {
    out.plan = orders(pool.portfolio, targets, quotes, trading, day, Explain::all, prefs);
    std::vector<Decimal> engine_after;
    for (const auto& c : out.plan.cash_after) engine_after.push_back(c.cash);
    auto settled = settle(out.plan, pool, quotes, currency, trading, view, day);
    out.conversions = std::move(settled.conversions);
    bool fits = true;
    for (std::size_t a = 0; a < accounts.size(); ++a) {
      if (!settled.own_after[a].is_negative()) continue;
      fits = false;
      // Withhold what the conversions cost beyond the engine's view (their
      // fees, the rounding of each), and at least the shortfall more.
      Decimal& withheld = prefs.withheld[accounts[a].id];
      const Decimal short_by =
          std::max(step, view.convert(-settled.own_after[a], pool.currency[a], currency, day));
      withheld = std::max(withheld + short_by, engine_after[a] - settled.after[a]);
    }
    if (fits) return out;
    if (round == kSizingRounds) {
      for (std::size_t a = 0; a < accounts.size(); ++a)
        if (settled.own_after[a].is_negative())
          notes.push_back(fmt::format(
              "'{}' would end about {} {} short of its own cash after the orders, the "
              "conversions and their estimated fees: keep a cash reserve "
              "(trading.cash_reserve_pct) or trade less",
              printable(accounts[a].name), (-settled.own_after[a]).str(), pool.currency[a]));
      return out;
    }
  }
}

}  // namespace keel::rules
