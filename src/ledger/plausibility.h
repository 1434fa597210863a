// Plausibility checks: rows that are posted (nothing in them breaks a rule)
// but look like slips, flagged in the posting command's output and in
// `keel verify` until confirmed (`keel confirm ID --reason ...`).
//
//  - a buy or sell whose price is more than 25 % away from the security's
//    close on the same day (no close that day: no check);
//  - a dividend naming a security the account held no units of when the day
//    began;
//  - a buy and a sale of the same security on the same day in the same
//    account (flagged on the later of the two).
//
// The 25 % bound is a choice of keel's (common practice for "fat finger"
// checks, no published source): wide enough for a volatile day, narrow
// enough to catch a misplaced decimal point.
#pragma once

#include <cstdint>
#include <set>
#include <string>
#include <vector>

#include "ledger/book.h"
#include "store/database.h"

namespace keel::ledger {

struct PlausibilityFlag {
  std::int64_t txn_id = 0;
  std::string message;  // "transaction 7 (buy of ALFA on 2024-03-01 in 'Main'): ..."
};

// Flags for the live transactions of `log` (only those in `only` when it is
// not empty), leaving out confirmed ones. In transaction id order.
std::vector<PlausibilityFlag> plausibility_flags(store::Database& db, const LedgerLog& log,
                                                 const std::set<std::int64_t>& only = {});

// Records that transaction `id` is right as posted. Throws InputError for an
// unknown id, one that is not flagged, or one confirmed already.
void confirm(store::Database& db, std::int64_t id, const std::string& reason);

}  // namespace keel::ledger
