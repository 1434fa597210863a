#include "store/market_rows.h"

#include <SQLiteCpp/Statement.h>

namespace keel::store {

struct MarketRows::Impl {
  explicit Impl(sqlite3* h)
      : closes_until(h,
                     "SELECT date, close FROM price WHERE security_id = ? AND date <= ? "
                     "ORDER BY date DESC"),
        closes_between(h,
                       "SELECT date, close FROM price WHERE security_id = ? AND date >= ? "
                       "AND date <= ? ORDER BY date"),
        close_days_between(h,
                           "SELECT date FROM price WHERE security_id = ? AND date >= ? "
                           "AND date <= ? ORDER BY date"),
        first_close_after(h,
                          "SELECT date FROM price WHERE security_id = ? AND date > ? "
                          "ORDER BY date LIMIT 1"),
        // The primary key (security_id, name, date, known_on) serves the order.
        figures_until(h,
                      "SELECT date, known_on, value FROM metric WHERE security_id = ? AND "
                      "name = ? AND known_on <= ? ORDER BY date DESC, known_on DESC"),
        // The index metric_by_name_known (name, known_on) serves the order.
        figures_by_known_on(h,
                            "SELECT security_id, date, known_on, value FROM metric "
                            "WHERE name = ? AND known_on <= ? "
                            "ORDER BY known_on, security_id, date"),
        distributions_of(h,
                         "SELECT security_id, ex_date, pay_date, per_share FROM distribution "
                         "WHERE security_id = ? AND ex_date >= ? AND ex_date <= ? "
                         "ORDER BY ex_date"),
        distributions_all(h,
                          "SELECT security_id, ex_date, pay_date, per_share FROM distribution "
                          "WHERE ex_date >= ? AND ex_date <= ? ORDER BY ex_date, security_id"),
        splits_of(h,
                  "SELECT security_id, date, ratio FROM split WHERE security_id = ? "
                  "AND date >= ? AND date <= ? ORDER BY date"),
        splits_all(h,
                   "SELECT security_id, date, ratio FROM split WHERE date >= ? AND date <= ? "
                   "ORDER BY date, security_id") {}

  Statement closes_until, closes_between, close_days_between, first_close_after;
  Statement figures_until, figures_by_known_on;
  Statement distributions_of, distributions_all, splits_of, splits_all;
  // Bound text must outlive the statement's run: kept here.
  std::string a, b, c;
};

MarketRows::MarketRows(Database& db) : impl_(std::make_unique<Impl>(db.sql().getHandle())) {}
MarketRows::~MarketRows() = default;

namespace {

// Restarts `st` with one security and two bound texts kept in `x` and `y`.
Statement& restart(Statement& st, std::int64_t id, std::string& x, std::string_view xv,
                   std::string& y, std::string_view yv) {
  st.reset();
  x.assign(xv);
  y.assign(yv);
  return st.bind(1, id).bind(2, x).bind(3, y);
}

// Restarts `st` with one security and one bound text kept in `x`.
Statement& restart(Statement& st, std::int64_t id, std::string& x, std::string_view xv) {
  st.reset();
  x.assign(xv);
  return st.bind(1, id).bind(2, x);
}

}  // namespace

Statement& MarketRows::closes_until(std::int64_t security_id, std::string_view day) {
  return restart(impl_->closes_until, security_id, impl_->a, day);
}

Statement& MarketRows::closes_between(std::int64_t security_id, std::string_view from,
                                      std::string_view to) {
  return restart(impl_->closes_between, security_id, impl_->a, from, impl_->b, to);
}

Statement& MarketRows::close_days_between(std::int64_t security_id, std::string_view from,
                                          std::string_view to) {
  return restart(impl_->close_days_between, security_id, impl_->a, from, impl_->b, to);
}

Statement& MarketRows::first_close_after(std::int64_t security_id, std::string_view day) {
  return restart(impl_->first_close_after, security_id, impl_->a, day);
}

Statement& MarketRows::figures_until(std::int64_t security_id, std::string_view metric,
                                     std::string_view day) {
  return restart(impl_->figures_until, security_id, impl_->a, metric, impl_->b, day);
}

Statement& MarketRows::figures_by_known_on(std::string_view metric, std::string_view day) {
  auto& m = *impl_;
  m.figures_by_known_on.reset();
  m.a.assign(metric);
  m.b.assign(day);
  return m.figures_by_known_on.bind(1, m.a).bind(2, m.b);
}

namespace {

// One security's rows of a span through `of`, or every security's through `all`.
Statement& span_of(Statement& of, Statement& all, std::optional<std::int64_t> security_id,
                   std::string& a, std::string_view from, std::string& b, std::string_view to) {
  if (security_id) return restart(of, *security_id, a, from, b, to);
  all.reset();
  a.assign(from);
  b.assign(to);
  return all.bind(1, a).bind(2, b);
}

}  // namespace

Statement& MarketRows::distributions_between(std::optional<std::int64_t> security_id,
                                             std::string_view from, std::string_view to) {
  auto& m = *impl_;
  return span_of(m.distributions_of, m.distributions_all, security_id, m.a, from, m.b, to);
}

Statement& MarketRows::splits_between(std::optional<std::int64_t> security_id,
                                      std::string_view from, std::string_view to) {
  auto& m = *impl_;
  return span_of(m.splits_of, m.splits_all, security_id, m.a, from, m.b, to);
}

std::optional<std::string> latest_close_day(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT max((SELECT max(p.date) FROM price p WHERE p.security_id = s.id)) "
                       "FROM security s");
  if (!st.executeStep() || st.getColumn(0).isNull()) return std::nullopt;
  return st.getColumn(0).getString();
}

std::vector<std::string> metric_names(Database& db) {
  // One seek per name through the index metric_by_name_known, instead of
  // reading every figure for DISTINCT.
  Statement next(db.sql().getHandle(), "SELECT min(name) FROM metric WHERE name > ?");
  std::vector<std::string> out;
  std::string after;
  while (true) {
    next.bind(1, after);
    if (!next.next() || next.null(0)) break;
    out.emplace_back(next.text(0));
    next.reset();
    after = out.back();
  }
  next.reset();
  return out;
}

}  // namespace keel::store
