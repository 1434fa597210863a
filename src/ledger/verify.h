// verify(): a full check of a ledger, for `keel verify` and after restores.
//
//  1. SQLite's integrity_check and foreign_key_check;
//  2. a replay of every transaction under the posting rules (no oversold
//     position, no negative cash where not allowed, transfer pairs whole);
//  3. an independent recount: each account's cash and each position's units
//     summed straight from the raw rows (splits applied by date), compared
//     with what the lot engine holds. keel stores nothing derived, so this
//     cross-checks the engine itself.
// Problems make the ledger suspect; warnings are facts worth a look. The
// report also gives each account's last reconciled day (keel reconcile).
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "store/database.h"

namespace keel::ledger {

struct VerifyReport {
  std::vector<std::string> problems;
  std::vector<std::string> warnings;
  std::size_t transactions = 0;
  std::size_t accounts = 0;
  // Each reconciled account's last reconciled day and the day it is locked
  // through (earlier when a period was reopened), by account name.
  struct Reconciled {
    std::string account;
    Date last;
    std::optional<Date> locked_through;
  };
  std::vector<Reconciled> reconciled;
  bool ok() const { return problems.empty(); }
};

VerifyReport verify(store::Database& db);

}  // namespace keel::ledger
