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

std::vector<std::pair<Date, Decimal>> closes_of(Database& db, std::int64_t security_id) {
  SQLite::Statement st(db.sql(),
                       "SELECT date, close FROM price WHERE security_id = ? ORDER BY date");
  st.bind(1, security_id);
  std::vector<std::pair<Date, Decimal>> out;
  while (st.executeStep())
    out.emplace_back(Date::parse(st.getColumn(0).getString()),
                     Decimal::parse(st.getColumn(1).getString()));
  return out;
}

std::optional<Date> latest_price_day(Database& db) {
  SQLite::Statement st(db.sql(), "SELECT max(date) FROM price");
  if (!st.executeStep() || st.getColumn(0).isNull()) return std::nullopt;
  return Date::parse(st.getColumn(0).getString());
}

}  // namespace keel::store
