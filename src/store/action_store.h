// Store functions for corporate actions (migration 0006).
//
// Rows are only ever added: an action is cancelled by a void row naming it.
// list_actions() returns every row, voids included, by date then id; which
// are in force is for the ledger to decide (ledger/actions.h).
#pragma once

#include <cstdint>
#include <optional>
#include <vector>

#include "model/records.h"
#include "store/database.h"

namespace keel::store {

std::int64_t insert_action(Database& db, const CorporateAction& action);
std::vector<CorporateAction> list_actions(Database& db);

}  // namespace keel::store
