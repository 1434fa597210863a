// Period locks: a matched reconciliation closes an account's past.
//
// Contract
//  - An account is locked through the latest day a matching statement was
//    recorded for it (keel reconcile), unless a later reopening moved the lock
//    back: reopening from day F leaves it locked through F - 1 at most.
//  - check_open() throws InputError when a posting, a void or a split dated
//    `day` would change a locked period of the account; ledger::post(),
//    post_batch(), void_transaction(), post_split() and the importers all
//    pass through it (see posting.cpp), so no command can go around it.
//  - reopen() records the reopening (account, first reopened day, reason).
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <string_view>

#include "core/date.h"
#include "model/records.h"
#include "store/database.h"

namespace keel::ledger {

class PeriodLocks {
 public:
  static PeriodLocks load(store::Database& db);
  std::optional<Date> locked_through(std::int64_t account_id) const;
  // `what` describes the change, e.g. "a deposit dated 2024-01-20".
  void check_open(const Account& account, Date day, std::string_view what) const;

 private:
  std::map<std::int64_t, Date> locks_;
};

// Returns the reopening's id. Throws InputError for an empty reason or an
// account with no reconciliation to reopen.
std::int64_t reopen(store::Database& db, const std::string& account, Date from_day,
                    const std::string& reason);

}  // namespace keel::ledger
