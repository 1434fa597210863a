#include "ledger/posting.h"

#include <fmt/format.h>

#include <set>

#include "core/error.h"
#include "core/text.h"
#include "market/day_view.h"
#include "model/security.h"
#include "store/action_store.h"
#include "store/ledger_store.h"

namespace keel::ledger {
namespace {

// `field` is the request's field the problem is about (empty: the row).
void require(bool ok, std::string_view kind, std::string_view field, std::string_view message) {
  if (!ok)
    throw ShapeError(fmt::format("{}: {}", kind, message), std::string(field),
                     std::string(message));
}

void require_positive(const std::optional<Decimal>& value, std::string_view kind,
                      std::string_view field, std::string_view extra = {}) {
  require(value.has_value(), kind, field, fmt::format("--{}{} is required", field, extra));
  require(value->is_positive(), kind, field,
          fmt::format("--{}{} must be positive, not {} (the kind gives the direction)", field,
                      extra, value->str()));
}

void forbid(bool present, std::string_view kind, std::string_view field,
            std::string_view extra = {}) {
  require(!present, kind, field, fmt::format("--{}{} does not apply", field, extra));
}

void refuse_future(Date date, bool allowed, std::string_view what) {
  if (allowed) return;
  if (const auto why = future_date(date))
    throw InputError(
        fmt::format("{}: --date {}; give {} to post it anyway", what, *why, kAllowFutureFlag));
}

// Sets the row's currency and rate (see ledger/fx_cash.h) and refuses what
// cannot be booked: a currency other than the security's for a trade, a
// rate on a row in the account's own currency, a rate given the wrong way
// round (checked against the stored rate of the day when there is one).
void settle_currency(store::Database& db, const PostRequest& r, const Account& account,
                     const std::optional<Security>& security, Transaction& t) {
  const std::string kind(to_string(r.kind));
  std::string currency = r.currency.value_or(security ? security->currency : account.currency);
  const bool trades_units = security && !is_cash_kind(r.kind);
  if (trades_units && currency != security->currency)
    throw ShapeError(
        fmt::format("{}: --currency {}: {} trades in {}", kind, currency,
                    printable(security->symbol), security->currency),
        "currency",
        fmt::format("{} trades in {}", printable(security->symbol), security->currency));
  if (r.kind == TxnKind::exchange) {
    if (*r.to_currency == currency)
      throw ShapeError(fmt::format("exchange: --to-currency {} is the currency sold", currency),
                       "to-currency", fmt::format("{} is the currency sold", currency));
    t.currency = currency == account.currency ? std::nullopt : std::optional(currency);
    t.to_currency = r.to_currency;
    t.rate = r.rate;
    check_direction(db, kind, currency, *r.to_currency, *r.rate, r.date);
    return;
  }
  if (currency == account.currency) {
    if (r.rate)
      throw ShapeError(
          fmt::format("{}: --rate {} does not apply: the row is in {}, the currency of account "
                      "'{}'",
                      kind, r.rate->str(), currency, printable(account.name)),
          "rate",
          fmt::format("does not apply: the row is in {}, the currency of account '{}'", currency,
                      printable(account.name)));
    return;
  }
  const bool may_settle = r.kind == TxnKind::buy || r.kind == TxnKind::sell ||
                          r.kind == TxnKind::dividend || r.kind == TxnKind::interest ||
                          r.kind == TxnKind::tax;
  if (r.rate && !may_settle)
    throw ShapeError(
        fmt::format(
            "{}: --rate does not apply (a {} in {} moves cash in {}; use 'exchange' to convert it)",
            kind, kind, currency, currency),
        "rate",
        fmt::format("does not apply (a {} in {} moves cash in {}; use 'exchange' to convert it)",
                    kind, currency, currency));
  if (trades_units && (r.kind == TxnKind::transfer_in || r.kind == TxnKind::transfer_out) && r.fee)
    throw ShapeError(fmt::format("{}: --fee on units of {} in {}: record the fee as its own row",
                                 kind, printable(security->symbol), currency),
                     "fee",
                     fmt::format("on units of {} in {}: record the fee as its own row",
                                 printable(security->symbol), currency));
  t.currency = currency;
  t.rate = r.rate;
  // The settlement rate is the account's currency in the row's.
  if (r.rate) check_direction(db, kind, account.currency, currency, *r.rate, r.date);
}

}  // namespace

void check_direction(store::Database& db, std::string_view what, const std::string& base,
                     const std::string& quote, const Decimal& rate, Date day) {
  const market::DayView view(db);
  std::optional<market::FxQuote> stored, reverse;
  try {
    stored = view.rate(base, quote, day);
    reverse = view.rate(quote, base, day);
  } catch (const InputError&) {
    return;  // no stored rate to compare with
  }
  // Each direction as stored where it is, so the message shows the file's figure.
  const Decimal inverse = reverse->rate;
  if ((rate - stored->rate).abs() <= (rate - inverse).abs()) return;
  const std::string reason = fmt::format(
      "{} reads as 1 {} = {} {}, the wrong way round: on {} 1 {} = {} {} and 1 {} = {} {}; give "
      "the rate as {} per {}",
      rate.str(), base, rate.str(), quote, stored->day.str(), base, stored->rate.str(), quote,
      quote, inverse.str(), base, quote, base);
  throw ShapeError(fmt::format("{}: --rate {}", what, reason), "rate", reason);
}

std::optional<std::string> future_date(Date date) {
  const Date today = Date::today();
  if (date <= today) return std::nullopt;
  return fmt::format("{} is after today ({})", date.str(), today.str());
}

ShapeError::ShapeError(std::string message, std::string field, std::string reason)
    : InputError(std::move(message)), field_(std::move(field)) {
  // The reason without the leading "--field": "must be positive, not -5 ...".
  const std::string prefix = "--" + field_;
  if (!field_.empty() && reason.rfind(prefix, 0) == 0) reason.erase(0, prefix.size());
  while (!reason.empty() && reason.front() == ' ') reason.erase(0, 1);
  reason_ = std::move(reason);
}

void check_shape(const PostRequest& r) {
  const std::string_view kind = to_string(r.kind);
  refuse_future(r.date, r.allow_future, kind);
  require(r.kind != TxnKind::void_entry, kind, "", "use 'keel void ID --reason TEXT' instead");
  if (r.fee) require(!r.fee->is_negative(), kind, "fee", "--fee must not be negative");
  forbid(!r.lots.empty() && r.kind != TxnKind::sell && r.kind != TxnKind::transfer_out, kind,
         "lots");
  forbid(r.to_account && r.kind != TxnKind::transfer_out, kind, "to-account");
  forbid(r.acquired && r.kind != TxnKind::transfer_in, kind, "acquired");
  forbid(r.to_currency && r.kind != TxnKind::exchange, kind, "to-currency");
  if (r.rate)
    require(r.rate->is_positive(), kind, "rate",
            fmt::format("--rate must be greater than zero, not {}", r.rate->str()));
  if (r.kind == TxnKind::exchange) {
    require_positive(r.amount, kind, "amount", " (what the exchange sold)");
    require(r.to_currency.has_value(), kind, "to-currency",
            "--to-currency is required (the currency bought)");
    require(r.rate.has_value(), kind, "rate",
            "--rate is required (units of --to-currency one unit of --currency bought)");
    forbid(r.symbol.has_value(), kind, "symbol");
    forbid(r.quantity.has_value(), kind, "quantity");
    forbid(r.price.has_value(), kind, "price");
    return;
  }
  if (r.note) check_name("note", *r.note, 4000);
  if (r.ref) check_identifier("ref", *r.ref, 200);

  if (is_cash_kind(r.kind)) {
    require_positive(r.amount, kind, "amount");
    forbid(r.quantity.has_value(), kind, "quantity");
    forbid(r.price.has_value(), kind, "price");
    forbid(r.fee.has_value(), kind, "fee", " (record a separate fee)");
    const bool may_name_security = r.kind != TxnKind::deposit && r.kind != TxnKind::withdrawal;
    forbid(r.symbol && !may_name_security, kind, "symbol");
    return;
  }
  if (r.kind == TxnKind::buy || r.kind == TxnKind::sell) {
    require(r.symbol.has_value(), kind, "symbol", "--symbol is required");
    require_positive(r.quantity, kind, "quantity");
    require_positive(r.price, kind, "price");
    forbid(r.amount.has_value(), kind, "amount", " (give --quantity and --price)");
    return;
  }
  // Transfers carry either cash (--amount) or units of a security (--symbol, --quantity).
  if (r.symbol) {
    require_positive(r.quantity, kind, "quantity");
    forbid(r.amount.has_value(), kind, "amount", " together with --symbol");
    const bool from_outside = r.kind == TxnKind::transfer_in;
    if (from_outside)
      require_positive(r.price, kind, "price", " (the unit cost of the units brought in)");
    else
      forbid(r.price.has_value(), kind, "price");
  } else {
    require_positive(r.amount, kind, "amount", " (or --symbol and --quantity for units)");
    // A charge for moving cash is its own 'fee' transaction; a fee here would
    // have no side of the cash to come from.
    forbid(r.fee.has_value(), kind, "fee", " on a cash transfer (record a separate fee)");
    forbid(r.quantity.has_value(), kind, "quantity", " without --symbol");
    forbid(r.price.has_value(), kind, "price");
    forbid(r.acquired.has_value(), kind, "acquired");
  }
}

std::vector<std::int64_t> write_unchecked(store::Database& db, const PostRequest& r,
                                          const PeriodLocks* locks) {
  check_shape(r);
  std::optional<PeriodLocks> loaded;
  if (!locks) locks = &loaded.emplace(PeriodLocks::load(db));
  const Account account = store::account_named(db, r.account);
  const std::string what = fmt::format("a {} dated {}", to_string(r.kind), r.date.str());
  locks->check_open(account, r.date, what);
  Transaction t;
  t.account_id = account.id;
  t.date = r.date;
  t.kind = r.kind;
  t.quantity = r.quantity;
  t.price = r.price;
  t.amount = r.amount;
  t.fee = r.fee.value_or(Decimal());
  t.acquired = r.acquired;
  t.lots = r.lots;
  t.ref = r.ref;
  t.row_hash = r.row_hash;
  t.note = r.note;
  std::optional<Security> security;
  if (r.symbol) {
    security = store::security_with_symbol(db, *r.symbol);
    const bool trades_units = !is_cash_kind(r.kind);
    if (trades_units && security->kind == SecurityKind::index)
      throw InputError(fmt::format("{}: {} is an index; an index has levels, not units to hold",
                                   to_string(r.kind), printable(security->symbol)));
    t.security_id = security->id;
  }
  settle_currency(db, r, account, security, t);
  if (r.ref && store::ref_exists(db, account.id, *r.ref))
    throw InputError(fmt::format("reference '{}' is already booked in account '{}'",
                                 printable(*r.ref), printable(account.name)));

  std::vector<std::int64_t> ids{store::insert_transaction(db, t)};
  if (r.to_account) {
    const Account receiver = store::account_named(db, *r.to_account);
    locks->check_open(receiver, r.date, what);
    if (receiver.id == account.id)
      throw InputError("transfer_out: --to-account names the same account");
    if (receiver.currency != account.currency)
      throw InputError(fmt::format("transfer_out: '{}' keeps {} and '{}' keeps {}",
                                   printable(account.name), account.currency,
                                   printable(receiver.name), receiver.currency));
    Transaction in = t;
    in.account_id = receiver.id;
    in.kind = TxnKind::transfer_in;
    in.fee = Decimal();
    in.lots.clear();
    in.link_id = ids.front();
    in.ref.reset();
    in.row_hash.reset();
    ids.push_back(store::insert_transaction(db, in));
  }
  return ids;
}

LedgerLog load_log(store::Database& db, store::TxnFields fields) {
  LedgerLog log;
  log.accounts = store::list_accounts(db);
  log.transactions = store::list_transactions(db, fields);
  log.splits = store::list_splits(db);
  log.rates = std::make_shared<const market::DayView>(db);
  log.actions = store::list_actions(db);
  return log;
}

Book check_ledger(store::Database& db,
                  const std::unordered_map<std::int64_t, std::string>& pending) {
  LedgerLog log = load_log(db);
  log.pending = pending;
  return replay(log);
}

std::vector<std::int64_t> post_batch(store::Database& db, const std::vector<PostRequest>& requests,
                                     const std::vector<std::string>& origins) {
  store::WriteTransaction tx(db);
  const PeriodLocks locks = PeriodLocks::load(db);
  std::vector<std::int64_t> all;
  std::unordered_map<std::int64_t, std::string> pending;
  for (std::size_t i = 0; i < requests.size(); ++i) {
    const std::string& origin = i < origins.size() ? origins[i] : std::string();
    std::vector<std::int64_t> ids;
    try {
      ids = write_unchecked(db, requests[i], &locks);
    } catch (const InputError& e) {
      throw InputError(origin.empty() ? e.what() : origin + ": " + e.what());
    }
    for (auto id : ids) pending[id] = origin;
    all.insert(all.end(), ids.begin(), ids.end());
  }
  check_ledger(db, pending);
  tx.commit();
  return all;
}

std::vector<std::int64_t> post(store::Database& db, const PostRequest& request) {
  store::WriteTransaction tx(db);
  auto ids = write_unchecked(db, request);
  std::unordered_map<std::int64_t, std::string> pending;
  for (auto id : ids) pending[id] = "";
  check_ledger(db, pending);
  tx.commit();
  return ids;
}

std::int64_t post_split(store::Database& db, const std::string& symbol, Date date,
                        const Decimal& ratio, bool allow_future) {
  refuse_future(date, allow_future, "split");
  if (!ratio.is_positive())
    throw InputError(fmt::format("split: --ratio must be positive, not {}", ratio.str()));
  if (ratio == Decimal(1)) throw InputError("split: a ratio of 1 changes nothing");
  store::WriteTransaction tx(db);
  const Security security = store::security_with_symbol(db, symbol);
  // A split changes the units of every account that has held the security.
  const PeriodLocks locks = PeriodLocks::load(db);
  std::set<std::int64_t> holders;
  for (const auto& t : store::list_transactions(db))
    if (t.security_id == security.id) holders.insert(t.account_id);
  for (const auto& a : store::list_accounts(db))
    if (holders.count(a.id))
      locks.check_open(a, date,
                       fmt::format("a split of {} dated {}", printable(symbol), date.str()));
  const auto id = store::insert_split(db, Split{0, security.id, date, ratio});
  check_ledger(db);
  tx.commit();
  return id;
}

namespace {

// The rows that stand or fall together with `row`: a transaction and the
// other half of its transfer pair; for a void, the voids of that group's rows.
std::vector<Transaction> void_group(const std::vector<Transaction>& all, const Transaction& row) {
  auto by_id = [&](std::int64_t id) -> const Transaction* {
    for (const auto& t : all)
      if (t.id == id) return &t;
    return nullptr;
  };
  // Down the chain of voids to the transaction they concern.
  std::vector<const Transaction*> chain{&row};
  while (chain.back()->kind == TxnKind::void_entry && chain.back()->voids_id) {
    const Transaction* below = by_id(*chain.back()->voids_id);
    if (!below || chain.size() > all.size()) break;
    chain.push_back(below);
  }
  std::vector<const Transaction*> group{chain.back()};
  const Transaction& base = *chain.back();
  for (const auto& t : all)
    if (t.kind != TxnKind::void_entry &&
        ((base.link_id && t.id == *base.link_id) || (t.link_id && *t.link_id == base.id)))
      group.push_back(&t);
  // Back up: each level is the voids of the level below.
  for (std::size_t level = chain.size() - 1; level-- > 0;) {
    std::vector<const Transaction*> up;
    for (const Transaction* member : group)
      for (const auto& t : all)
        if (t.kind == TxnKind::void_entry && t.voids_id && *t.voids_id == member->id)
          up.push_back(&t);
    group = std::move(up);
  }
  std::vector<Transaction> out;
  for (const Transaction* t : group) out.push_back(*t);
  return out;
}

}  // namespace

std::vector<std::int64_t> write_void_unchecked(store::Database& db, std::int64_t id,
                                               const std::string& reason,
                                               const PeriodLocks* locks) {
  check_name("reason", reason, 4000);
  std::optional<PeriodLocks> loaded;
  if (!locks) locks = &loaded.emplace(PeriodLocks::load(db));
  const auto target = store::find_transaction(db, id);
  if (!target) throw InputError(fmt::format("there is no transaction {}", id));
  const auto all = store::list_transactions(db);
  if (auto by = store::void_of(db, id)) {
    if (voided_ids(all).count(id))
      throw InputError(fmt::format(
          "transaction {} is already void (by {}); to put it back in the books, void {}", id, *by,
          *by));
    const auto again = store::void_of(db, *by);
    throw InputError(
        fmt::format("transaction {} was voided by {} and put back by {}; to void it again, void {}",
                    id, *by, again ? *again : *by, again ? *again : *by));
  }

  const auto accounts = store::list_accounts(db);
  std::vector<std::int64_t> ids;
  for (const auto& t : void_group(all, *target)) {
    for (const auto& a : accounts)
      if (a.id == t.account_id)
        locks->check_open(a, t.date,
                          fmt::format("voiding transaction {} (a {} dated {})", t.id,
                                      to_string(t.kind), t.date.str()));
    Transaction v;
    v.account_id = t.account_id;
    v.date = t.date;
    v.kind = TxnKind::void_entry;
    v.voids_id = t.id;
    v.note = reason;
    ids.push_back(store::insert_transaction(db, v));
  }
  return ids;
}

VoidResult void_transaction(store::Database& db, std::int64_t id, const std::string& reason) {
  check_name("reason", reason, 4000);
  store::WriteTransaction tx(db);
  const auto cancelled_before = voided_ids(store::list_transactions(db));
  VoidResult result;
  result.void_ids = write_void_unchecked(db, id, reason);
  check_ledger(db);
  // What changed: rows cancelled now that were not, and rows back in force.
  const auto after = store::list_transactions(db);
  const auto cancelled_after = voided_ids(after);
  for (const auto& t : after) {
    const bool was = cancelled_before.count(t.id) > 0, is = cancelled_after.count(t.id) > 0;
    if (t.kind != TxnKind::void_entry && is && !was) result.cancelled.push_back(t);
    if (t.kind != TxnKind::void_entry && was && !is) result.reinstated.push_back(t);
  }
  tx.commit();
  return result;
}

}  // namespace keel::ledger
