#include "ledger/period.h"

#include <fmt/format.h>

#include "core/error.h"
#include "core/text.h"
#include "store/ledger_store.h"
#include "store/period_store.h"

namespace keel::ledger {
namespace {

std::optional<Date> lock_from(const std::vector<store::PeriodEvent>& events) {
  std::optional<Date> lock;
  for (const auto& e : events) {
    if (e.kind == store::PeriodEvent::Kind::reconciled) {
      if (!lock || *lock < e.day) lock = e.day;
    } else if (lock && *lock >= e.day) {
      lock = e.day.plus_days(-1);
    }
  }
  return lock;
}

}  // namespace

PeriodLocks PeriodLocks::load(store::Database& db) {
  PeriodLocks locks;
  for (const auto& [account_id, day] : store::last_reconciled_days(db)) {
    (void)day;
    if (auto lock = lock_from(store::period_events(db, account_id)))
      locks.locks_[account_id] = *lock;
  }
  return locks;
}

std::optional<Date> PeriodLocks::locked_through(std::int64_t account_id) const {
  const auto it = locks_.find(account_id);
  if (it == locks_.end()) return std::nullopt;
  return it->second;
}

void PeriodLocks::check_open(const Account& account, Date day, std::string_view what) const {
  const auto lock = locked_through(account.id);
  if (!lock || day > *lock) return;
  throw InputError(fmt::format(
      "{} would change '{}', which is reconciled through {}; if the statement was wrong, "
      "reopen the period first: keel reopen --account '{}' --from {} --reason TEXT",
      what, printable(account.name), lock->str(), printable(account.name), day.str()));
}

std::int64_t reopen(store::Database& db, const std::string& account, Date from_day,
                    const std::string& reason) {
  if (reason.empty()) throw InputError("--reason: say why the period is reopened");
  check_name("reason", reason, 4000);
  store::WriteTransaction tx(db);
  const Account a = store::account_named(db, account);
  const auto lock = PeriodLocks::load(db).locked_through(a.id);
  if (!lock)
    throw InputError(
        fmt::format("--account: '{}' has no reconciled period to reopen", printable(a.name)));
  if (from_day > *lock)
    throw InputError(fmt::format("--from: '{}' is locked only through {}; {} is already open",
                                 printable(a.name), lock->str(), from_day.str()));
  const auto id = store::insert_reopening(db, a.id, from_day, reason);
  tx.commit();
  return id;
}

}  // namespace keel::ledger
