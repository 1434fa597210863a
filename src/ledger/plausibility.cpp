#include "ledger/plausibility.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>

#include "core/error.h"
#include "core/text.h"
#include "ledger/posting.h"
#include "store/ledger_store.h"
#include "store/plausibility_store.h"

namespace keel::ledger {

std::vector<PlausibilityFlag> plausibility_flags(store::Database& db, const LedgerLog& log,
                                                 const std::set<std::int64_t>& only) {
  const auto confirmed = store::confirmed_transactions(db);
  std::map<std::int64_t, std::string> symbols, accounts;
  for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
  for (const auto& a : log.accounts) accounts[a.id] = a.name;
  Replayer replayer(log);
  auto wanted = [&](const Transaction& t) {
    return (only.empty() || only.count(t.id)) && !confirmed.count(t.id) && t.security_id;
  };
  auto where = [&](const Transaction& t) {
    return fmt::format("transaction {} ({} of {} on {} in '{}')", t.id, to_string(t.kind),
                       printable(symbols[*t.security_id]), t.date.str(),
                       printable(accounts[t.account_id]));
  };
  std::vector<PlausibilityFlag> out;
  // live() is in posting order; replay needs date order.
  std::vector<const Transaction*> live = replayer.live();
  std::stable_sort(live.begin(), live.end(), [](const Transaction* a, const Transaction* b) {
    return a->date != b->date ? a->date < b->date : a->id < b->id;
  });
  std::map<std::tuple<std::int64_t, std::int64_t, Date, TxnKind>, std::int64_t> traded;
  for (const Transaction* t : live) {
    if (t->kind == TxnKind::buy || t->kind == TxnKind::sell) {
      const TxnKind other = t->kind == TxnKind::buy ? TxnKind::sell : TxnKind::buy;
      const auto key = std::tuple(t->account_id, *t->security_id, t->date, other);
      if (const auto it = traded.find(key); it != traded.end() && wanted(*t))
        out.push_back({t->id, fmt::format("{}: a {} of the same security on the same day in the "
                                          "same account (transaction {})",
                                          where(*t), to_string(other), it->second)});
      traded[std::tuple(t->account_id, *t->security_id, t->date, t->kind)] = t->id;
      if (wanted(*t) && t->price)
        if (const auto close = store::close_on(db, *t->security_id, t->date);
            close && close->is_positive()) {
          const Decimal gap = (*t->price - *close).abs();
          if (gap * Decimal(4) > *close)  // more than 25 % of the close
            out.push_back(
                {t->id, fmt::format("{}: price {} is {}% {} the day's close of {}", where(*t),
                                    t->price->str(),
                                    Decimal::divide(gap * Decimal(100), *close, 1).fixed(1),
                                    *t->price > *close ? "above" : "below", close->str())});
        }
    }
    if (t->kind == TxnKind::dividend && wanted(*t)) {
      const Book& book = replayer.advance_to(t->date.plus_days(-1));
      const auto& positions = book.account(t->account_id).positions;
      const auto it = positions.find(*t->security_id);
      if (it == positions.end() || !it->second.quantity().is_positive())
        out.push_back(
            {t->id, fmt::format("{}: no units of it were held when the day began", where(*t))});
    }
  }
  std::stable_sort(out.begin(), out.end(),
                   [](const auto& a, const auto& b) { return a.txn_id < b.txn_id; });
  return out;
}

void confirm(store::Database& db, std::int64_t id, const std::string& reason) {
  check_name("reason", reason, 4000);
  store::WriteTransaction tx(db);
  if (!store::find_transaction(db, id))
    throw InputError(fmt::format("there is no transaction {}", id));
  if (store::confirmed_transactions(db).count(id))
    throw InputError(fmt::format("transaction {} is confirmed already", id));
  const auto flags = plausibility_flags(db, load_log(db), {id});
  if (flags.empty())
    throw InputError(fmt::format("transaction {} is not flagged by any plausibility check", id));
  store::confirm_transaction(db, id, reason);
  tx.commit();
}

}  // namespace keel::ledger
