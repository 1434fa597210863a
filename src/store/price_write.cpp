#include "store/price_write.h"

#include <SQLiteCpp/Statement.h>
#include <fmt/format.h>

#include "core/error.h"

namespace keel::store {

void upsert_price(Database& db, std::int64_t security_id, Date day, const Decimal& close) {
  if (!close.is_positive())
    throw InputError(
        fmt::format("close {} on {}: a close must be positive", close.str(), day.str()));
  SQLite::Statement st(db.sql(),
                       "INSERT INTO price (security_id, date, close) VALUES (?, ?, ?) "
                       "ON CONFLICT (security_id, date) DO UPDATE SET close = excluded.close");
  st.bind(1, security_id);
  st.bind(2, day.str());
  st.bind(3, close.str());
  st.exec();
}

}  // namespace keel::store
