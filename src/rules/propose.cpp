#include "rules/propose.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <memory>
#include <optional>
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
#include "rules/tax_keys.h"
#include "rules/track_record.h"
#include "store/ledger_store.h"

namespace keel::rules {
std::vector<std::string> proposal_cautions(Date as_of) {
  return {
      "This is the output of your own rule applied to your own data; it is not investment "
      "advice.",
      "Valuation screens can stay wrong for years: a cheap name can keep getting cheaper, and "
      "past results do not predict future ones.",
      fmt::format("Prices and fees are estimates from closes on or before {}; check current "
                  "prices, quantities and costs before trading.",
                  as_of.str()),
      "Tax effects of the sells depend on local rules; check them with your tax authority or a "
      "licensed professional.",
  };
}

std::vector<Account> pool_accounts(store::Database& db, const std::vector<std::string>& names,
                                   const std::function<void(const std::string&)>& fail) {
  std::vector<Account> pool;
  std::vector<std::string> known;
  for (const auto& a : store::list_accounts(db)) known.push_back(a.name);
  for (const auto& name : names) {
    auto a = store::find_account(db, name);
    if (!a)
      fail(fmt::format("no account named '{}' in the ledger{}", printable(name),
                       known.empty() ? "" : " (accounts: " + printable_list(known) + ")"));
    pool.push_back(*a);
  }
  return pool;
}

Date choose_as_of(const market::DayView& view, const LedgerLog& log,
                  const std::vector<Account>& pool, std::optional<Date> as_of,
                  std::string_view whose, std::vector<std::string>& notes) {
  // By default the day takes in every transaction of the accounts: trades
  // recorded after the latest close (the fills of the last proposal, say)
  // must count, or their orders would be proposed again.
  std::optional<Date> last_posting;
  std::size_t later_postings = 0;
  const auto voided = voided_ids(log.transactions);
  std::set<std::int64_t> pool_ids;
  for (const auto& a : pool) pool_ids.insert(a.id);
  for (const auto& t : log.transactions) {
    if (t.kind == TxnKind::void_entry || voided.count(t.id) || !pool_ids.count(t.account_id))
      continue;
    if (!last_posting || t.date > *last_posting) last_posting = t.date;
    if (as_of && t.date > *as_of) ++later_postings;
  }
  if (as_of) {
    if (later_postings > 0)
      notes.push_back(
          fmt::format("{} transaction{} in {} {} dated after {} and not taken into account: "
                      "this proposal may repeat orders already filled",
                      later_postings, later_postings == 1 ? "" : "s", whose,
                      later_postings == 1 ? "is" : "are", as_of->str()));
    return *as_of;
  }
  const auto latest = view.latest_close_day();
  if (!latest)
    throw InputError(
        "the ledger holds no closes to value the accounts at; import prices first "
        "('keel import prices FILE') or give --as-of");
  if (last_posting && *last_posting > *latest) {
    notes.push_back(
        fmt::format("as of {}, the day of the latest transaction in {}, after the latest "
                    "close ({}): what was traded since that close is valued at its trade price",
                    last_posting->str(), whose, latest->str()));
    return *last_posting;
  }
  return *latest;
}

Proposal propose(store::Database& db, const Rule& rule, std::optional<Date> as_of_opt,
                 std::vector<PlannedCash> planned, std::optional<std::string> currency) {
  Proposal p;
  p.rule_name = rule.name;
  p.rule_sha256 = io::sha256_hex(rule.text);
  // One state of the ledger for the whole proposal, read under one lock; a
  // track record's series first, outside it, where it may keep close packs.
  std::optional<store::ReadTransaction> snapshot;
  if (!rule.track_record) snapshot.emplace(db);
  const market::DayView view(db);
  const auto pool = pool_accounts(
      db, rule.accounts, [&](const std::string& why) { rule.fail("scope.accounts", why); });
  for (const auto& a : pool) p.accounts.push_back(a.name);
  p.currency = currency ? *currency : pool.front().currency;

  const auto log = ledger::load_log(db);
  p.as_of = choose_as_of(view, log, pool, as_of_opt, "the rule's accounts", p.notes);
  const Date as_of = p.as_of;
  resolve_planned(planned, pool, "rule");
  p.planned = std::move(planned);
  require_rates(pool, p.currency, view, as_of);

  // The universe and the sleeves, checked before the ledger is replayed.
  Inputs inputs(rule, view, p.currency, Convert::yes);
  p.notes.insert(p.notes.end(), inputs.notes().begin(), inputs.notes().end());
  std::unique_ptr<LedgerTrackRecord> track;
  if (rule.track_record) {
    track = std::make_unique<LedgerTrackRecord>(db, rule, inputs, view, as_of);
    snapshot.emplace(db);
  }

  // The pool's state on the as-of day.
  Replayer replayer(log);
  const Book& book = replayer.advance_to(as_of);
  p.last_txn_id = store::last_transaction_id(db);
  std::set<std::int64_t> held;
  FxPool fx_state = fx_pool(book, pool, p.currency, view, as_of, held, p.notes);
  Portfolio& portfolio = fx_state.portfolio;
  const auto statuses = ledger::TaxStatuses::load(db);
  for (auto& a : portfolio.accounts) a.tax = statuses.on(a.id, as_of);

  auto chosen = inputs.select(view, as_of, held);
  if (chosen.refusal) rule.fail(chosen.refusal->key, chosen.refusal->why);
  p.screen = std::move(chosen.screen);
  p.targets = std::move(chosen.targets);
  const Quotes quotes = inputs.quotes(
      view, as_of, p.targets, held,
      [&](std::int64_t id) -> std::optional<Inputs::Trade> {
        if (const auto t = book.last_trade(id)) return Inputs::Trade{t->day, t->price};
        return std::nullopt;
      },
      p.notes);

  // The tax keys steer the same order steps as a plan's (rules/tax_keys.h).
  std::set<std::int64_t> placed;
  for (const auto& t : p.targets)
    for (const auto& s : rule.weights.sleeves)
      if (t.sleeve && s.place_deferred && s.symbol == t.symbol) placed.insert(t.security_id);
  HouseholdPrefs prefs = household_prefs(rule.tax, std::move(placed), Decimal());
  plan_cash(fx_state, p.planned, prefs, p.currency, view, as_of);
  refuse_unraisable(portfolio, quotes, prefs, as_of);

  Decimal pool_value;
  for (const auto& a : portfolio.accounts) {
    pool_value += a.cash;
    for (const auto& [id, h] : a.holdings) pool_value += h.quantity * quotes.at(id).price;
  }
  if (!pool_value.is_positive())
    rule.fail("scope.accounts",
              fmt::format("the accounts {} hold nothing to invest on {} (value {}); deposit "
                          "cash first",
                          printable_list(p.accounts), as_of.str(), pool_value.str()));

  p.converted = fx_state.converted || std::any_of(quotes.begin(), quotes.end(), [](const auto& q) {
                  return q.second.fx.has_value();
                });
  if (p.converted) {
    auto fx = fx_orders(fx_state, p.targets, quotes, p.currency, rule.trading, view, as_of, prefs,
                        p.notes);
    p.plan = std::move(fx.plan);
    p.conversions = std::move(fx.conversions);
  } else {
    p.plan = orders(portfolio, p.targets, quotes, rule.trading, as_of, Explain::all, prefs);
  }
  refuse_ungiven(portfolio, p.plan, prefs, rule.tax.gain_cap, as_of);
  p.cautions = proposal_cautions(as_of);
  if (rule.tax_keys()) p.cautions.push_back(tax_caution("rule"));
  return p;
}

store::ProposalOrderRow proposal_order_row(const Order& o) {
  store::ProposalOrderRow r;
  r.account_id = o.account_id;
  r.security_id = o.security_id;
  r.side = std::string(to_string(o.side));
  r.quantity = o.quantity;
  // The price a fill will be compared with: the name's own.
  r.price = o.fx ? o.fx->quote.local_price : o.price;
  r.value = o.value;
  r.fee = o.fee;
  r.weight_now = o.weight_now;
  r.weight_target = o.weight_target;
  r.reason = o.reason;
  for (const auto& l : o.lots) r.lots.push_back(LotPick{l.lot_id, l.quantity});
  return r;
}

std::vector<store::ProposalCashRow> proposal_cash_rows(store::Database& db,
                                                       const std::vector<PlannedCash>& planned) {
  std::vector<store::ProposalCashRow> out;
  for (const auto& c : planned)
    out.push_back({store::find_account(db, c.account)->id, c.account, c.amount});
  return out;
}

std::int64_t save(store::Database& db, const Rule& rule, const Proposal& p) {
  store::ProposalRow row;
  row.as_of = p.as_of;
  row.rule_name = rule.name;
  row.rule_file = rule.source;
  row.rule_text = rule.text;
  row.rule_sha256 = p.rule_sha256;
  row.pool_value = p.plan.pool_value;
  row.last_txn_id = p.last_txn_id;
  for (const auto& o : p.plan.orders) row.orders.push_back(proposal_order_row(o));
  row.cash = proposal_cash_rows(db, p.planned);
  store::WriteTransaction tx(db);
  const std::int64_t id = store::save_proposal(db, row);
  tx.commit();
  return id;
}

Review review(store::Database& db, std::int64_t proposal_id) {
  auto found = store::find_proposal(db, proposal_id);
  if (!found)
    throw InputError(fmt::format("no saved proposal {}; see 'keel proposals list'", proposal_id));
  Review out;
  out.proposal = std::move(*found);
  const auto& p = out.proposal;

  std::map<std::int64_t, std::string> accounts, symbols;
  for (const auto& a : store::list_accounts(db)) accounts[a.id] = a.name;
  for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
  std::set<std::int64_t> pool(p.account_ids.begin(), p.account_ids.end());
  if (p.kind != "plan") {
    const Rule rule = parse_rule(p.rule_text, p.rule_file);
    for (const auto& [id, name] : accounts)
      if (std::find(rule.accounts.begin(), rule.accounts.end(), name) != rule.accounts.end())
        pool.insert(id);
  }

  struct Traded {
    Decimal quantity, value;
  };
  using Key = std::tuple<std::int64_t, std::int64_t, std::string>;  // account, security, side
  std::map<Key, Traded> traded;
  std::vector<Key> seen_order;
  const auto txns = store::list_transactions(db);
  const auto voided = voided_ids(txns);
  for (const auto& t : txns) {
    if (t.id <= p.last_txn_id || voided.count(t.id) || !pool.count(t.account_id)) continue;
    if (t.kind != TxnKind::buy && t.kind != TxnKind::sell) continue;
    const Key k{t.account_id, *t.security_id, t.kind == TxnKind::buy ? "buy" : "sell"};
    auto [it, fresh] = traded.try_emplace(k);
    if (fresh) seen_order.push_back(k);
    it->second.quantity += *t.quantity;
    it->second.value += *t.quantity * *t.price;
  }
  for (const auto& o : p.orders) {
    ReviewLine line{o.part, o.account, o.symbol, o.side, o.quantity, o.price, {}, std::nullopt, ""};
    const Key k{o.account_id, o.security_id, o.side};
    if (auto it = traded.find(k); it != traded.end()) {
      line.traded = it->second.quantity;
      line.avg_price = Decimal::divide(it->second.value, it->second.quantity, 4);
      traded.erase(it);
    }
    line.status = line.traded.is_zero()       ? "not traded"
                  : line.traded == o.quantity ? "done"
                  : line.traded < o.quantity  ? "partly"
                                              : "more than proposed";
    out.lines.push_back(std::move(line));
  }
  // Planned cash against the deposits and withdrawals booked since, by account.
  for (const auto& c : p.cash) {
    const TxnKind kind = c.amount.is_negative() ? TxnKind::withdrawal : TxnKind::deposit;
    CashLine line{c.account, c.amount, {}, ""};
    for (const auto& t : txns)
      if (t.id > p.last_txn_id && !voided.count(t.id) && t.account_id == c.account_id &&
          t.kind == kind && t.amount)
        line.booked += c.amount.is_negative() ? -*t.amount : *t.amount;
    line.status = line.booked.is_zero()                ? "not booked"
                  : line.booked == c.amount            ? "booked"
                  : line.booked.abs() < c.amount.abs() ? "partly"
                                                       : "more than planned";
    out.cash.push_back(std::move(line));
  }
  for (const auto& k : seen_order) {
    const auto it = traded.find(k);
    if (it == traded.end()) continue;
    out.lines.push_back(ReviewLine{"", accounts[std::get<0>(k)], symbols[std::get<1>(k)],
                                   std::get<2>(k), Decimal(), Decimal(), it->second.quantity,
                                   Decimal::divide(it->second.value, it->second.quantity, 4),
                                   "not proposed"});
  }
  return out;
}

}  // namespace keel::rules
