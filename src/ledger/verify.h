// verify(): a full check of a ledger, for `keel verify` and after restores.
//
//  1. SQLite's integrity_check and foreign_key_check;
//  2. a replay of every transaction under the posting rules (no oversold
//     position, no negative cash where not allowed, transfer pairs whole);
//  3. an independent recount: each account's cash and each position's units
//     summed straight from the raw rows (splits applied by date), compared
//     with what the lot engine holds. keel stores nothing derived, so this
//     cross-checks the engine itself;
//  4. signs (check_signs): no open lot and no realized part may carry a cost
//     below zero, nor a part proceeds below zero unless the whole sale's
//     net proceeds are (a fee above the gross: a warning, not a problem).
//  5. text: cells that are not valid UTF-8, and names, symbols and references
//     holding invisible characters (store::text_problems, name_warnings).
// Problems make the ledger suspect; warnings are facts worth a look (text
// problems are warnings: every figure is still sound, and reports replace
// ill-formed bytes with U+FFFD in JSON and show them escaped on terminals).
// The report also gives each account's last reconciled day (keel reconcile).
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "ledger/book.h"
#include "ledger/holdings.h"
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

struct Findings {
  std::vector<std::string> problems;
  std::vector<std::string> warnings;
};
Findings check_signs(const std::vector<RealizedPart>& realized, const std::vector<LotLine>& open);

}  // namespace keel::ledger
