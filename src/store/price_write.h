// Writing and reading single price rows, with bound parameters.
//  - upsert_price(): stores the close of a security on a day, replacing any
//    close already stored for that day. The close must be positive
//    (InputError otherwise).
//  - closes_of(): every close of one security, ascending by day.
//  - latest_price_day(): the latest day with any close; unset when none.
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
std::vector<std::pair<Date, Decimal>> closes_of(Database& db, std::int64_t security_id);
std::optional<Date> latest_price_day(Database& db);

}  // namespace keel::store
