// Writing a single price row, with bound parameters.
//  - upsert_price(): stores the close of a security on a day, replacing any
//    close already stored for that day. The close must be positive
//    (InputError otherwise).
#pragma once

#include <cstdint>
#include <optional>
#include <utility>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "store/database.h"

namespace keel::store {

void upsert_price(Database& db, std::int64_t security_id, Date day, const Decimal& close);
}  // namespace keel::store
