#include "rules/plan_propose.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <memory>
#include <set>

#include "core/error.h"
#include "core/text.h"
#include "io/sha256.h"
#include "ledger/accounts.h"
#include "ledger/fx_cash.h"
#include "ledger/posting.h"
#include "ledger/tax.h"
#include "market/day_view.h"
#include "rules/inputs.h"
#include "rules/propose.h"
#include "rules/tax_keys.h"
#include "rules/track_record.h"
#include "store/ledger_store.h"
#include "store/proposals.h"

namespace keel::rules {
namespace {

bool same_trading(const TradingRule& a, const TradingRule& b) {
  return a.drift_pct_points == b.drift_pct_points && a.drift_rel_pct == b.drift_rel_pct &&
         a.min_trade == b.min_trade && a.cash_reserve_pct == b.cash_reserve_pct &&
         a.fractional == b.fractional && a.fee_fixed == b.fee_fixed && a.fee_bps == b.fee_bps &&
         a.lot_order == b.lot_order;
}

std::string pct_text(const Decimal& fraction) {
  return (fraction * Decimal(100)).str() + "%";
}

}  // namespace

PlanProposal propose_plan(store::Database& db, const Plan& plan, std::optional<Date> as_of_opt,
                          std::vector<PlannedCash> planned, std::optional<std::string> asked) {
  PlanProposal p;
  p.plan_name = plan.name;
  const market::DayView view(db);

  // Every pool's accounts, then the one as-of day for all of them.
  std::vector<std::vector<Account>> pool_accounts_of;
  std::vector<Account> all;
  for (const auto& pool : plan.pools) {
    const std::string key = pool.own ? "part.accounts" : "pools." + pool.name + ".accounts";
    const PlanPart* rule_part = nullptr;
    for (const auto& part : plan.parts)
      if (pool.from_rule && &plan.pools[part.pool] == &pool) rule_part = &part;
    pool_accounts_of.push_back(pool_accounts(db, pool.accounts, [&](const std::string& why) {
      if (rule_part) rule_part->rule->fail("scope.accounts", why);
      plan.fail(pool.accounts_at, key, why);
    }));
    all.insert(all.end(), pool_accounts_of.back().begin(), pool_accounts_of.back().end());
  }
  const auto log = ledger::load_log(db);
  p.as_of = choose_as_of(view, log, all, as_of_opt, "the plan's accounts", p.notes);
  const Date as_of = p.as_of;

  // Planned cash goes to an account of the plan.
  resolve_planned(planned, all, "plan");
  p.planned = planned;

  Replayer replayer(log);
  const Book& book = replayer.advance_to(as_of);
  p.last_txn_id = store::last_transaction_id(db);
  const auto statuses = ledger::TaxStatuses::load(db);
  const bool tax_keys =
      plan.tax.any() || std::any_of(plan.parts.begin(), plan.parts.end(), [](const PlanPart& part) {
        return part.place_deferred || (part.rule && part.rule->tax_keys());
      });
  // A rule part's [tax] is the plan's to give: one set of tax keys per proposal.
  for (const auto& part : plan.parts)
    if (part.rule && part.rule->tax.any())
      p.notes.push_back(fmt::format(
          "part '{}': the [tax] table of rule file {} is not used in a plan; the plan's [tax] "
          "applies",
          printable(part.name), printable(part.rule->source)));
  Decimal gain_used;  // net estimated gain of the sells in taxable accounts, across pools
  const Inputs::LastTrade last_trade = [&](std::int64_t id) -> std::optional<Inputs::Trade> {
    if (const auto t = book.last_trade(id)) return Inputs::Trade{t->day, t->price};
    return std::nullopt;
  };

  for (std::size_t pi = 0; pi < plan.pools.size(); ++pi) {
    const PlanPool& pool = plan.pools[pi];
    const auto& accounts = pool_accounts_of[pi];
    const std::string currency =
        asked ? *asked
        : !ledger::mixed_currencies(accounts)
            ? accounts.front().currency
            : store::ledger_currency(db).value_or(accounts.front().currency);
    require_rates(accounts, currency, view, as_of);
    PoolResult result;
    result.name = pool.name;
    for (const auto& a : accounts) result.accounts.push_back(a.name);

    // The parts of the pool and the names each manages.
    std::vector<std::size_t> parts;
    for (std::size_t i = 0; i < plan.parts.size(); ++i)
      if (plan.parts[i].pool == pi) parts.push_back(i);
    std::vector<std::optional<Inputs>> inputs(parts.size());
    std::vector<std::unique_ptr<LedgerTrackRecord>> tracks(parts.size());
    std::map<std::int64_t, std::size_t> owner;  // security -> index into `parts`
    const TradingRule* trading = nullptr;
    static const TradingRule defaults;
    for (std::size_t k = 0; k < parts.size(); ++k) {
      const PlanPart& part = plan.parts[parts[k]];
      std::vector<std::int64_t> ids;
      if (part.rule) {
        inputs[k].emplace(*part.rule, view, currency, Convert::yes);
        if (part.rule->track_record)
          tracks[k] = std::make_unique<LedgerTrackRecord>(db, *part.rule, *inputs[k], view, as_of);
        p.notes.insert(p.notes.end(), inputs[k]->notes().begin(), inputs[k]->notes().end());
        ids = inputs[k]->securities();
        if (!trading) {
          trading = &part.rule->trading;
          result.trading_from = part.name;
        } else if (!same_trading(*trading, part.rule->trading)) {
          part.rule->fail("trading",
                          fmt::format("differs from the [trading] of part '{}', which shares pool "
                                      "'{}'; the parts of one pool trade by one set of settings",
                                      printable(result.trading_from), printable(pool.name)));
        }
      } else {
        for (const auto& s : part.fixed) {
          const Security* sec = view.security(s.symbol);
          if (!sec)
            plan.fail(part.fixed_at, "part.fixed." + s.symbol,
                      fmt::format("no security '{}' in the ledger", printable(s.symbol)));
          ids.push_back(sec->id);
        }
      }
      for (const std::int64_t id : ids) {
        const auto [it, fresh] = owner.emplace(id, k);
        if (!fresh && it->second != k)
          plan.fail(part.rule ? part.at : part.fixed_at, part.rule ? "part.rule" : "part.fixed",
                    fmt::format("'{}' is managed by both part '{}' and part '{}' in pool '{}'; "
                                "a security belongs to one part of a pool",
                                printable(view.security(id)->symbol),
                                printable(plan.parts[parts[it->second]].name), printable(part.name),
                                printable(pool.name)));
      }
    }
    if (!trading) trading = &defaults;

    // The pool on the as-of day, with the planned cash; unmanaged names out.
    std::set<std::int64_t> held;
    FxPool fx_state = fx_pool(book, accounts, currency, view, as_of, held, p.notes);
    Portfolio& portfolio = fx_state.portfolio;
    // Placed names: a part's (part.place) and a rule part's sleeves' (sleeve.place).
    std::set<std::int64_t> placed;
    for (const auto& [id, k] : owner) {
      const PlanPart& part = plan.parts[parts[k]];
      if (part.place_deferred) placed.insert(id);
      if (part.rule)
        for (const auto& s : part.rule->weights.sleeves)
          if (s.place_deferred && view.security(s.symbol) && view.security(s.symbol)->id == id)
            placed.insert(id);
    }
    HouseholdPrefs prefs = household_prefs(plan.tax, std::move(placed), gain_used);
    for (auto& a : portfolio.accounts) a.tax = statuses.on(a.id, as_of);
    plan_cash(fx_state, p.planned, prefs, currency, view, as_of);
    std::set<std::int64_t> unmanaged;
    for (const std::int64_t id : held)
      if (!owner.count(id)) unmanaged.insert(id);
    const Quotes unmanaged_quotes =
        quote_names(view, as_of, {}, unmanaged, last_trade, p.notes, currency);
    for (auto& a : portfolio.accounts)
      for (auto it = a.holdings.begin(); it != a.holdings.end();) {
        if (!unmanaged.count(it->first) || !it->second.quantity.is_positive()) {
          ++it;
          continue;
        }
        const Quote& q = unmanaged_quotes.at(it->first);
        p.unmanaged.push_back(UnmanagedHolding{pool.name, a.name, q.symbol, it->second.quantity,
                                               q.price, it->second.quantity * q.price,
                                               pool.sell_unmanaged});
        it = pool.sell_unmanaged ? std::next(it) : a.holdings.erase(it);
      }

    // Each part's screen and targets, scaled by its share.
    std::vector<Target> targets;
    Quotes quotes = unmanaged_quotes;
    const std::size_t first_part = p.parts.size();
    for (std::size_t k = 0; k < parts.size(); ++k) {
      const PlanPart& part = plan.parts[parts[k]];
      PartResult r;
      r.name = part.name;
      r.pool = pool.name;
      r.share = part.share;
      std::set<std::int64_t> own_held;
      for (const std::int64_t id : held)
        if (const auto it = owner.find(id); it != owner.end() && it->second == k)
          own_held.insert(id);
      if (part.rule) {
        r.rule = part.rule->name;
        r.rule_file = part.rule->source;
        auto chosen = inputs[k]->select(view, as_of, own_held);
        if (chosen.refusal) part.rule->fail(chosen.refusal->key, chosen.refusal->why);
        r.screen = std::move(chosen.screen);
        r.targets = std::move(chosen.targets);
      } else {
        for (const auto& s : part.fixed) {
          const Security* sec = view.security(s.symbol);
          r.targets.push_back(Target{sec->id, sec->symbol, s.weight, true, std::nullopt,
                                     own_held.count(sec->id) > 0,
                                     fmt::format("fixed at {} of the part", pct_text(s.weight))});
        }
      }
      for (auto& t : r.targets) {
        t.weight = (t.weight * part.share).rounded(12);
        targets.push_back(t);
      }
      const auto part_quotes =
          quote_names(view, as_of, r.targets, own_held, last_trade, p.notes, currency);
      quotes.insert(part_quotes.begin(), part_quotes.end());
      p.parts.push_back(std::move(r));
    }
    if (pool.sell_unmanaged)
      for (const std::int64_t id : unmanaged)
        targets.push_back(Target{id, quotes.at(id).symbol, Decimal(), false, std::nullopt, true,
                                 "unmanaged: the pool sells names outside its parts"});

    // A withdrawal beyond the cash is raised by selling in the account.
    refuse_unraisable(portfolio, quotes, prefs, as_of);
    Decimal value;
    for (const auto& a : portfolio.accounts) {
      value += a.cash;
      for (const auto& [id, h] : a.holdings)
        if (h.quantity.is_positive()) value += h.quantity * quotes.at(id).price;
    }
    if (!value.is_positive())
      plan.fail(pool.accounts_at, pool.own ? "part.accounts" : "pools." + pool.name + ".accounts",
                fmt::format("the accounts {} hold nothing to invest on {} (value {}); deposit "
                            "cash first",
                            printable_list(result.accounts), as_of.str(), value.str()));

    result.currency = currency;
    result.converted =
        fx_state.converted || std::any_of(quotes.begin(), quotes.end(),
                                          [](const auto& q) { return q.second.fx.has_value(); });
    if (result.converted) {
      auto fx =
          fx_orders(fx_state, targets, quotes, currency, *trading, view, as_of, prefs, p.notes);
      result.plan = std::move(fx.plan);
      result.conversions = std::move(fx.conversions);
    } else {
      result.plan = orders(portfolio, targets, quotes, *trading, as_of, Explain::all, prefs);
    }
    refuse_ungiven(portfolio, result.plan, prefs, plan.tax.gain_cap, as_of);
    for (const auto& o : result.plan.orders)
      for (const auto& a : portfolio.accounts)
        if (a.id == o.account_id && a.tax == TaxStatus::taxable)
          for (const auto& l : o.lots) gain_used += l.est_gain;
    // Each order under the part that manages its name.
    for (auto& o : result.plan.orders) {
      const auto it = owner.find(o.security_id);
      if (it == owner.end()) {
        o.reason = "unmanaged: " + o.reason;
        continue;
      }
      auto& part = p.parts[first_part + it->second];
      o.reason = part.name + ": " + o.reason;
      part.orders.push_back(o);
    }
    p.pools.push_back(std::move(result));
  }
  p.cautions = proposal_cautions(as_of);
  if (tax_keys) p.cautions.push_back(tax_caution("plan"));
  return p;
}

std::int64_t save_plan(store::Database& db, const Plan& plan, const PlanProposal& p) {
  store::ProposalRow row;
  row.kind = "plan";
  row.as_of = p.as_of;
  row.rule_name = plan.name;
  row.rule_file = plan.source;
  row.rule_text = plan.text;
  row.rule_sha256 = io::sha256_hex(plan.text);
  row.last_txn_id = p.last_txn_id;
  for (const auto& pool : p.pools) {
    row.pool_value += pool.plan.pool_value;
    for (const auto& name : pool.accounts)
      row.account_ids.push_back(store::find_account(db, name)->id);
  }
  // Each order under the part that manages its name (the reason begins with it).
  std::map<std::pair<std::int64_t, std::int64_t>, std::string> part_of;  // account, security
  for (const auto& part : p.parts)
    for (const auto& o : part.orders) part_of[{o.account_id, o.security_id}] = part.name;
  for (const auto& pool : p.pools)
    for (const auto& o : pool.plan.orders) {
      auto r = proposal_order_row(o);
      const auto it = part_of.find({o.account_id, o.security_id});
      r.part = it == part_of.end() ? "unmanaged" : it->second;
      row.orders.push_back(std::move(r));
    }
  row.cash = proposal_cash_rows(db, p.planned);
  store::WriteTransaction tx(db);
  const std::int64_t id = store::save_proposal(db, row);
  tx.commit();
  return id;
}

}  // namespace keel::rules
