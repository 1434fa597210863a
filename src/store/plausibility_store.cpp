#include "store/plausibility_store.h"

#include <SQLiteCpp/SQLiteCpp.h>
#include <fmt/format.h>

#include "core/error.h"
#include "store/ledger_store.h"

namespace keel::store {

std::optional<Decimal> close_on(Database& db, std::int64_t security_id, Date day) {
  SQLite::Statement st(db.sql(), "SELECT close FROM price WHERE security_id = ? AND date = ?");
  st.bind(1, security_id);
  st.bind(2, day.str());
  if (!st.executeStep()) return std::nullopt;
  return Decimal::parse(st.getColumn(0).getString());
}

void confirm_transaction(Database& db, std::int64_t txn_id, const std::string& reason) {
  SQLite::Statement seen(db.sql(), "SELECT 1 FROM confirmed_txn WHERE txn_id = ?");
  seen.bind(1, txn_id);
  if (seen.executeStep())
    throw InputError(fmt::format("transaction {} is confirmed already", txn_id));
  SQLite::Statement st(db.sql(),
                       "INSERT INTO confirmed_txn (txn_id, reason, recorded_at) VALUES (?, ?, ?)");
  st.bind(1, txn_id);
  st.bind(2, reason);
  st.bind(3, utc_timestamp());
  st.exec();
}

std::set<std::int64_t> confirmed_transactions(Database& db) {
  SQLite::Statement st(db.sql(), "SELECT txn_id FROM confirmed_txn");
  std::set<std::int64_t> out;
  while (st.executeStep()) out.insert(st.getColumn(0).getInt64());
  return out;
}

}  // namespace keel::store
