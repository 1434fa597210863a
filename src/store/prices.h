// Read access to daily closes (as traded, not adjusted).
//  - latest_close(): the close on `day` or, failing that, the latest before it.
//  - PriceBook: every close of every security in memory, sorted by day, for
//    valuing many days quickly; at() has the same on-or-before meaning.
#pragma once

#include <cstdint>
#include <optional>
#include <unordered_map>
#include <utility>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "store/database.h"

namespace keel::store {

std::optional<Decimal> latest_close(Database& db, std::int64_t security_id, Date day);

class PriceBook {
 public:
  static PriceBook load(Database& db);
  void add(std::int64_t security_id, Date day, Decimal close);  // days must ascend per security
  std::optional<Decimal> at(std::int64_t security_id, Date day) const;
  // Every day on which any security has a close, ascending.
  std::vector<Date> all_days() const;

 private:
  std::unordered_map<std::int64_t, std::vector<std::pair<Date, Decimal>>> series_;
};

}  // namespace keel::store
