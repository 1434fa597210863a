#include "store/prices.h"

#include <SQLiteCpp/Statement.h>

#include <algorithm>
#include <set>

namespace keel::store {

std::optional<Decimal> latest_close(Database& db, std::int64_t security_id, Date day) {
  SQLite::Statement st(db.sql(),
                       "SELECT close FROM price WHERE security_id = ? AND date <= ? "
                       "ORDER BY date DESC LIMIT 1");
  st.bind(1, security_id);
  st.bind(2, day.str());
  if (!st.executeStep()) return std::nullopt;
  return Decimal::parse(st.getColumn(0).getString());
}

PriceBook PriceBook::load(Database& db) {
  PriceBook book;
  SQLite::Statement st(db.sql(),
                       "SELECT security_id, date, close FROM price ORDER BY security_id, date");
  while (st.executeStep())
    book.add(st.getColumn(0).getInt64(), Date::parse(st.getColumn(1).getString()),
             Decimal::parse(st.getColumn(2).getString()));
  return book;
}

void PriceBook::add(std::int64_t security_id, Date day, Decimal close) {
  series_[security_id].emplace_back(day, std::move(close));
}

std::optional<Decimal> PriceBook::at(std::int64_t security_id, Date day) const {
  const auto it = series_.find(security_id);
  if (it == series_.end()) return std::nullopt;
  const auto& s = it->second;
  auto pos = std::upper_bound(s.begin(), s.end(), day,
                              [](Date d, const auto& entry) { return d < entry.first; });
  if (pos == s.begin()) return std::nullopt;
  return std::prev(pos)->second;
}

std::vector<Date> PriceBook::all_days() const {
  std::set<Date> days;
  for (const auto& [id, s] : series_)
    for (const auto& [d, close] : s) days.insert(d);
  return {days.begin(), days.end()};
}

}  // namespace keel::store
