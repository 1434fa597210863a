#include "ledger/action_posting.h"

#include <fmt/format.h>

#include <set>

#include "core/error.h"
#include "core/text.h"
#include "ledger/actions.h"
#include "market/day_view.h"
#include "store/action_store.h"
#include "store/ledger_store.h"

namespace keel::ledger {
namespace {

std::string kind_word(ActionKind kind) {
  std::string word(to_string(kind));
  for (auto& c : word)
    if (c == '_') c = '-';
  return word;
}

void shape(bool ok, const ActionRequest& r, const std::string& field, const std::string& reason) {
  if (!ok)
    throw ShapeError(fmt::format("{}: --{} {}", kind_word(r.kind), field, reason), field, reason);
}

void positive(const std::optional<Decimal>& v, const ActionRequest& r, const std::string& field) {
  if (v) shape(v->is_positive(), r, field, fmt::format("must be positive, not {}", v->str()));
}

void required(const std::optional<Decimal>& v, const ActionRequest& r, const std::string& field) {
  shape(v.has_value(), r, field, "is required");
}

void absent(bool present, const ActionRequest& r, const std::string& field) {
  shape(!present, r, field, "does not apply");
}

// Accounts holding the security when the day starts, before that day's
// transactions (the state the action applies to).
std::set<std::int64_t> holders_at_start(const LedgerLog& log, std::int64_t security_id, Date day) {
  const Book book = replay(log, day.plus_days(-1));
  std::set<std::int64_t> out;
  for (const auto& a : log.accounts) {
    const auto& positions = book.account(a.id).positions;
    if (const auto it = positions.find(security_id); it != positions.end())
      if (it->second.quantity().is_positive()) out.insert(a.id);
  }
  return out;
}

void refuse_locked(store::Database& db, const LedgerLog& log, const std::set<std::int64_t>& ids,
                   Date day, const std::string& what) {
  const PeriodLocks locks = PeriodLocks::load(db);
  for (const auto& a : log.accounts)
    if (ids.count(a.id)) locks.check_open(a, day, what);
}

}  // namespace

void check_action_shape(const ActionRequest& r) {
  if (!r.allow_future)
    if (const auto why = future_date(r.date))
      throw InputError(fmt::format("{}: --date {}; give {} to post it anyway", kind_word(r.kind),
                                   *why, kAllowFutureFlag));
  positive(r.ratio, r, "ratio");
  if (r.cost_percent) {
    positive(r.cost_percent, r, "cost-percent");
    shape(*r.cost_percent <= Decimal(100), r, "cost-percent",
          fmt::format("must be at most 100, not {}", r.cost_percent->str()));
  }
  if (r.kind == ActionKind::delisting) {
    required(r.cash, r, "cash");
    shape(!r.cash->is_negative(), r, "cash",
          fmt::format("must not be negative, not {}", r.cash->str()));
  } else {
    positive(r.cash, r, "cash");
  }
  if (r.cash_in_lieu) {
    shape(r.in_lieu_price.has_value(), r, "cash-in-lieu",
          "needs the price per unit at which fractions are paid");
    positive(r.in_lieu_price, r, "cash-in-lieu");
  }
  const bool hands_out_units =
      r.kind == ActionKind::split || r.kind == ActionKind::stock_dividend ||
      r.kind == ActionKind::spinoff || (r.kind == ActionKind::merger && r.ratio);
  if (!hands_out_units) absent(r.cash_in_lieu, r, "cash-in-lieu");
  const bool has_target = r.kind == ActionKind::merger || r.kind == ActionKind::spinoff;
  if (has_target)
    shape(r.target.has_value() && !r.target->empty(), r, "into", "is required");
  else
    shape(!r.target, r, "into", "does not apply");
  switch (r.kind) {
    case ActionKind::split:
      required(r.ratio, r, "ratio");
      shape(*r.ratio != Decimal(1), r, "ratio", "of 1 changes nothing");
      absent(r.cash.has_value(), r, "cash");
      absent(r.cost_percent.has_value(), r, "cost-percent");
      break;
    case ActionKind::stock_dividend:
      required(r.ratio, r, "ratio");
      absent(r.cash.has_value(), r, "cash");
      absent(r.cost_percent.has_value(), r, "cost-percent");
      break;
    case ActionKind::merger:
      shape(r.ratio || r.cash, r, "ratio", "or --cash is required (units, cash or both)");
      if (!(r.ratio && r.cash)) absent(r.cost_percent.has_value(), r, "cost-percent");
      break;
    case ActionKind::spinoff:
      required(r.ratio, r, "ratio");
      required(r.cost_percent, r, "cost-percent");
      absent(r.cash.has_value(), r, "cash");
      break;
    case ActionKind::return_of_capital:
      required(r.cash, r, "cash");
      absent(r.ratio.has_value(), r, "ratio");
      absent(r.cost_percent.has_value(), r, "cost-percent");
      break;
    case ActionKind::delisting:
      absent(r.ratio.has_value(), r, "ratio");
      absent(r.cost_percent.has_value(), r, "cost-percent");
      break;
    case ActionKind::void_entry:
      throw InputError("a void of a corporate action is recorded with 'keel action void'");
  }
  if (r.note) check_name("note", *r.note, 4000);
}

PostedAction post_action(store::Database& db, const ActionRequest& r) {
  check_action_shape(r);
  store::WriteTransaction tx(db);
  const PostedAction posted = write_action_unchecked(db, r);
  check_ledger(db);
  tx.commit();
  return posted;
}

PostedAction write_action_unchecked(store::Database& db, const ActionRequest& r) {
  check_action_shape(r);
  const Security security = store::security_with_symbol(db, r.symbol);
  CorporateAction a;
  a.security_id = security.id;
  a.date = r.date;
  a.kind = r.kind;
  a.ratio = r.ratio;
  a.cash = r.cash;
  a.cost_percent = r.cost_percent;
  if (r.cash_in_lieu) a.in_lieu = r.in_lieu_price;
  a.note = r.note;
  const std::string what =
      fmt::format("a {} of {} dated {}", kind_word(r.kind), printable(r.symbol), r.date.str());
  PostedAction posted;
  if (r.target) {
    const auto target = store::find_security(db, *r.target);
    if (!target)
      throw InputError(
          fmt::format("{}: --into '{}' is not a security of this ledger; add it first "
                      "with 'keel security add'",
                      what, printable(*r.target)));
    if (target->id == security.id)
      throw InputError(fmt::format("{}: --into names the same security", what));
    if (target->currency != security.currency)
      throw InputError(fmt::format("{}: {} is in {} and {} in {}; keel does not convert currencies",
                                   what, printable(security.symbol), security.currency,
                                   printable(target->symbol), target->currency));
    a.target_id = target->id;
    if (r.kind == ActionKind::merger && r.ratio && r.cash && !r.cost_percent) {
      // Default split of cost between the stock and the cash received: by
      // their market values on the day (the stock at the acquirer's close on
      // or before it), as in a part disposal's A / (A + B) apportionment.
      const auto close = market::DayView(db).close(target->id, r.date);
      if (!close || close->price.is_zero())
        throw InputError(fmt::format(
            "{}: no close of {} on or before {} to split the cost by market value; give "
            "--cost-percent (the share of cost that goes to the {} units)",
            what, printable(target->symbol), r.date.str(), printable(target->symbol)));
      const Decimal stock = *r.ratio * close->price;
      a.cost_percent = Decimal::divide(stock * Decimal(100), stock + *r.cash, 6);
      posted.derived_cost_percent = a.cost_percent;
    }
  }
  const LedgerLog log = load_log(db);
  for (const auto* other : live_actions(log.actions))
    if (other->security_id == security.id && other->date == r.date && other->kind == r.kind)
      throw InputError(
          fmt::format("{}: action {} is already a {} of {} on that day; void it "
                      "first to record another",
                      what, other->id, kind_word(r.kind), printable(r.symbol)));
  if (r.kind == ActionKind::split)
    for (const auto& s : log.splits)
      if (s.security_id == security.id && s.date == r.date)
        throw InputError(fmt::format("{}: a split of {} on that day is already recorded", what,
                                     printable(r.symbol)));
  const auto holders = holders_at_start(log, security.id, r.date);
  if (holders.empty() && !r.market_only)
    throw InputError(
        fmt::format("{}: no account holds {} when {} begins (give {} to record it "
                    "as market data for back-tests and signal checks)",
                    what, printable(r.symbol), r.date.str(), kMarketOnlyFlag));
  if (!holders.empty() && r.market_only)
    throw InputError(
        fmt::format("{}: {}, but {} is held when {} begins, and the action changes "
                    "those lots; leave the option out",
                    what, kMarketOnlyFlag, printable(r.symbol), r.date.str()));
  refuse_locked(db, log, holders, r.date, what);
  posted.id = store::insert_action(db, a);
  return posted;
}

std::int64_t void_action(store::Database& db, std::int64_t id, const std::string& reason) {
  check_name("reason", reason, 4000);
  store::WriteTransaction tx(db);
  const LedgerLog log = load_log(db);
  const CorporateAction* target = nullptr;
  for (const auto& a : log.actions)
    if (a.id == id) target = &a;
  if (!target) throw InputError(fmt::format("there is no corporate action {}", id));
  if (target->kind == ActionKind::void_entry)
    throw InputError(fmt::format("corporate action {} is a void; it cannot be voided", id));
  for (const auto& a : log.actions)
    if (a.voids_id == id)
      throw InputError(fmt::format("corporate action {} is already void (by {})", id, a.id));
  const std::string what = fmt::format("voiding corporate action {} (a {} dated {})", id,
                                       kind_word(target->kind), target->date.str());
  refuse_locked(db, log, holders_at_start(log, target->security_id, target->date), target->date,
                what);
  CorporateAction v;
  v.security_id = target->security_id;
  v.date = target->date;
  v.kind = ActionKind::void_entry;
  v.voids_id = id;
  v.note = reason;
  const auto void_id = store::insert_action(db, v);
  check_ledger(db);
  tx.commit();
  return void_id;
}

}  // namespace keel::ledger
