#include "store/point_in_time.h"

namespace keel::store {

PointInTime::PointInTime(Database& db)
    : close_(db.sql(),
             "SELECT date, close FROM price WHERE security_id = ? AND date <= ? "
             "ORDER BY date DESC LIMIT 1"),
      // The primary key (security_id, name, date, known_on) serves the order.
      metric_(db.sql(),
              "SELECT date, known_on, value FROM metric WHERE security_id = ? AND name = ? AND "
              "known_on <= ? ORDER BY date DESC, known_on DESC LIMIT 1") {}

const std::string& PointInTime::day_text(Date day) {
  if (day_ != day) day_ = day, day_str_ = day.str();
  return day_str_;
}

std::optional<std::pair<Date, Decimal>> PointInTime::close(std::int64_t security_id, Date day) {
  close_.reset();
  close_.bind(1, security_id);
  close_.bind(2, day_text(day));
  if (!close_.executeStep()) return std::nullopt;
  return std::pair{Date::parse(close_.getColumn(0).getString()),
                   Decimal::parse(close_.getColumn(1).getString())};
}

std::optional<MetricPoint> PointInTime::metric(std::int64_t security_id, std::string_view metric,
                                               Date day) {
  metric_.reset();
  metric_.bind(1, security_id);
  metric_.bind(2, std::string(metric));
  metric_.bind(3, day_text(day));
  if (!metric_.executeStep()) return std::nullopt;
  return MetricPoint{security_id, Decimal::parse(metric_.getColumn(2).getString()),
                     Date::parse(metric_.getColumn(0).getString()),
                     Date::parse(metric_.getColumn(1).getString())};
}

std::optional<Date> latest_close_day(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT max((SELECT max(p.date) FROM price p WHERE p.security_id = s.id)) "
                       "FROM security s");
  if (!st.executeStep() || st.getColumn(0).isNull()) return std::nullopt;
  return Date::parse(st.getColumn(0).getString());
}

bool metric_exists(Database& db, std::string_view metric) {
  SQLite::Statement st(db.sql(), "SELECT 1 FROM metric WHERE name = ? LIMIT 1");
  st.bind(1, std::string(metric));
  return st.executeStep();
}

std::vector<std::string> metric_names(Database& db) {
  SQLite::Statement st(db.sql(), "SELECT DISTINCT name FROM metric ORDER BY name");
  std::vector<std::string> out;
  while (st.executeStep()) out.push_back(st.getColumn(0).getString());
  return out;
}

std::int64_t last_transaction_id(Database& db) {
  SQLite::Statement st(db.sql(), "SELECT coalesce(max(id), 0) FROM txn");
  st.executeStep();
  return st.getColumn(0).getInt64();
}

}  // namespace keel::store
