// Exchange rates in the ledger (table fx_rate, migration 0005).
//
// Contract
//  - upsert_fx_rate(), FxWriter::upsert(): adds one row inside the caller's
//    WriteTransaction.
//    The same row again is `unchanged`; a different rate for the same
//    (base, quote, date) is a `conflict` (`existing` gets the stored rate)
//    unless `replace`, then `replaced`. Codes and the rate are checked by the
//    caller (io/fx_intake); the table's CHECKs stand behind it.
//  - list_fx_rates(): every row, ordered by base, quote, date; with a
//    currency and a day: the rows with that currency on either side dated on
//    or before the day, in the same order.
#pragma once

#include <SQLiteCpp/Statement.h>

#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "store/database.h"
#include "store/market_data.h"

namespace keel::store {

struct FxRateRow {
  std::string base, quote;
  Date date;
  Decimal rate;
};

// upsert_fx_rate() for many rows, as an import writes them: its statements
// are prepared once. Lives inside the caller's WriteTransaction.
class FxWriter {
 public:
  explicit FxWriter(Database& db);
  Upsert upsert(const FxRateRow& row, bool replace, std::string& existing);

 private:
  SQLite::Statement find_, update_, insert_;
};

Upsert upsert_fx_rate(Database& db, const FxRateRow& row, bool replace, std::string& existing);
std::vector<FxRateRow> list_fx_rates(Database& db);
std::vector<FxRateRow> list_fx_rates(Database& db, const std::string& currency, Date until);

}  // namespace keel::store
