// Store functions for plausibility checks: the close of a security on one
// day, and transactions confirmed as right (migration 0006).
#pragma once

#include <cstdint>
#include <optional>
#include <set>
#include <string>

#include "core/date.h"
#include "core/decimal.h"
#include "store/database.h"

namespace keel::store {

std::optional<Decimal> close_on(Database& db, std::int64_t security_id, Date day);
// Throws InputError when `txn_id` is confirmed already.
void confirm_transaction(Database& db, std::int64_t txn_id, const std::string& reason);
std::set<std::int64_t> confirmed_transactions(Database& db);

}  // namespace keel::store
