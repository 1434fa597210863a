// Point-in-time reads for one day and many securities: what a rule may know
// on its as-of day, with each statement prepared once and reused.
//
// Contract
//  - close(S, D): the close of S on D or, failing that, the latest before it
//    (store::latest_close), with the day it is from.
//  - metric(S, M, D): exactly store::metric_as_of(S, M, D): among rows with
//    known_on <= D, the latest period date, and for it the latest known_on.
//  - The reader borrows the Database; it must not outlive it.
#pragma once

#include <SQLiteCpp/Statement.h>

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "store/database.h"
#include "store/market_data.h"

namespace keel::store {

class PointInTime {
 public:
  explicit PointInTime(Database& db);
  std::optional<std::pair<Date, Decimal>> close(std::int64_t security_id, Date day);
  std::optional<MetricPoint> metric(std::int64_t security_id, std::string_view metric, Date day);

 private:
  const std::string& day_text(Date day);  // the last day's ISO text, kept
  SQLite::Statement close_;
  SQLite::Statement metric_;
  std::optional<Date> day_;
  std::string day_str_;
};

// The latest day with any close (as store::latest_price_day), found through
// the (security_id, date) key one security at a time instead of a scan of
// every close; unset when the ledger has no prices.
std::optional<Date> latest_close_day(Database& db);
// Whether any figure of `metric` is stored, and the names of those that are.
bool metric_exists(Database& db, std::string_view metric);
std::vector<std::string> metric_names(Database& db);
// Highest transaction id, 0 for an empty ledger.
std::int64_t last_transaction_id(Database& db);

}  // namespace keel::store
