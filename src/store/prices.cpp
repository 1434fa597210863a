#include "store/prices.h"

#include <SQLiteCpp/Statement.h>
#include <sqlite3.h>

#include <algorithm>
#include <memory>
#include <string_view>

#include "store/sqlite_error.h"

namespace keel::store {
namespace {

std::string_view column_text(sqlite3_stmt* st, int col) {
  const auto* p = reinterpret_cast<const char*>(sqlite3_column_text(st, col));
  return p ? std::string_view(p, static_cast<std::size_t>(sqlite3_column_bytes(st, col)))
           : std::string_view{};
}

// Entries of `s` on or before `day`: the position one past the answer.
template <typename Series>
std::size_t on_or_before(const Series& s, Date day) {
  const auto pos = std::upper_bound(s.begin(), s.end(), day,
                                    [](Date d, const auto& entry) { return d < entry.first; });
  return static_cast<std::size_t>(pos - s.begin());
}

}  // namespace

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
  // Through the raw handle: text columns are parsed in place, not copied.
  sqlite3* h = db.sql().getHandle();
  sqlite3_stmt* raw = nullptr;
  if (const int rc = sqlite3_prepare_v2(
          h, "SELECT security_id, date, close FROM price ORDER BY security_id, date", -1, &raw,
          nullptr);
      rc != SQLITE_OK)
    throw_sqlite_error(h, rc);
  const std::unique_ptr<sqlite3_stmt, int (*)(sqlite3_stmt*)> owner(raw, sqlite3_finalize);
  int rc = SQLITE_OK;
  while ((rc = sqlite3_step(raw)) == SQLITE_ROW)
    book.add(sqlite3_column_int64(raw, 0), Date::parse(column_text(raw, 1)),
             Decimal::parse(column_text(raw, 2)));
  if (rc != SQLITE_DONE) throw_sqlite_error(h, rc);
  return book;
}

void PriceBook::add(std::int64_t security_id, Date day, Decimal close) {
  const auto [it, added] = index_.try_emplace(security_id, series_.size());
  if (added) series_.emplace_back();
  series_[it->second].emplace_back(day, std::move(close));
}

const PriceBook::Series* PriceBook::series_of(std::int64_t security_id, std::size_t& index) const {
  const auto it = index_.find(security_id);
  if (it == index_.end()) return nullptr;
  index = it->second;
  return &series_[index];
}

std::optional<Decimal> PriceBook::at(std::int64_t security_id, Date day) const {
  std::size_t index = 0;
  const Series* s = series_of(security_id, index);
  if (!s) return std::nullopt;
  const std::size_t n = on_or_before(*s, day);
  if (n == 0) return std::nullopt;
  return (*s)[n - 1].second;
}

std::vector<Date> PriceBook::all_days() const {
  // Marks each close's day in a bitmap over the book's span: linear in the
  // closes, where sorting a copy of every close's day dominated a statement.
  std::optional<Date> lo, hi;
  for (const Series& s : series_)
    for (const auto& entry : s) {
      if (!lo || entry.first < *lo) lo = entry.first;
      if (!hi || entry.first > *hi) hi = entry.first;
    }
  if (!lo) return {};
  std::vector<bool> seen(static_cast<std::size_t>(*hi - *lo) + 1);
  for (const Series& s : series_)
    for (const auto& entry : s) seen[static_cast<std::size_t>(entry.first - *lo)] = true;
  std::vector<Date> days;
  for (std::size_t i = 0; i < seen.size(); ++i)
    if (seen[i]) days.push_back(lo->plus_days(static_cast<int>(i)));
  return days;
}

std::optional<Date> PriceBook::last_day() const {
  std::optional<Date> last;
  for (const Series& s : series_)
    if (!s.empty() && (!last || s.back().first > *last)) last = s.back().first;
  return last;
}

PriceBook::Cursor::Cursor(const PriceBook& book)
    : book_(book), next_(book.series_.size(), 0), asked_(book.series_.size()) {}

const Decimal* PriceBook::Cursor::at(std::int64_t security_id, Date day) {
  std::size_t index = 0;
  const Series* s = book_.series_of(security_id, index);
  if (!s) return nullptr;
  std::size_t& n = next_[index];
  if (n > 0 && day < asked_[index]) {
    n = on_or_before(*s, day);
  } else {
    while (n < s->size() && (*s)[n].first <= day) ++n;
  }
  asked_[index] = day;
  return n == 0 ? nullptr : &(*s)[n - 1].second;
}

}  // namespace keel::store
