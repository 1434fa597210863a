// The repurchase window on a proposal (see ledger/tax.h for the ledger's
// side): a proposed sell whose lots would close at an estimated loss is
// flagged when the same security was bought, in any account of the ledger,
// within `window_days` days before the proposal's day, or when the same
// proposal buys it in another account. The flag is added to the order's
// reason, and the proposal gets a caution deferring to local rules and a
// licensed professional. The buys of the lots being sold are not a
// repurchase. Throws InputError naming --repurchase-window for a window
// below one day.
#pragma once

#include "rules/propose.h"
#include "store/database.h"

namespace keel::rules {

void flag_repurchases(store::Database& db, Proposal& proposal, int window_days);

}  // namespace keel::rules
