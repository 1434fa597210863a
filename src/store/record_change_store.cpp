#include "store/record_change_store.h"

#include <SQLiteCpp/SQLiteCpp.h>
#include <fmt/format.h>

#include "core/error.h"
#include "store/ledger_store.h"
#include "store/sql_values.h"

namespace keel::store {

void insert_record_change(Database& db, const RecordChange& c) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO record_change (record, record_id, field, old_value, new_value, "
                       "effective, recorded_at) VALUES (?, ?, ?, ?, ?, ?, ?)");
  st.bind(1, c.record);
  st.bind(2, c.record_id);
  st.bind(3, c.field);
  bind_optional(st, 4, c.old_value);
  bind_optional(st, 5, c.new_value);
  st.bind(6, c.effective.str());
  st.bind(7, utc_timestamp());
  st.exec();
}

std::vector<RecordChange> list_record_changes(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT id, record, record_id, field, old_value, new_value, effective "
                       "FROM record_change ORDER BY effective, id");
  std::vector<RecordChange> out;
  while (st.executeStep()) {
    RecordChange c;
    c.id = st.getColumn(0).getInt64();
    c.record = st.getColumn(1).getString();
    c.record_id = st.getColumn(2).getInt64();
    c.field = st.getColumn(3).getString();
    c.old_value = opt_text(st.getColumn(4));
    c.new_value = opt_text(st.getColumn(5));
    c.effective = Date::parse(st.getColumn(6).getString());
    out.push_back(std::move(c));
  }
  return out;
}

std::optional<Security> find_security_by_former_symbol(Database& db, const std::string& symbol) {
  SQLite::Statement st(db.sql(),
                       "SELECT s.symbol FROM record_change c JOIN security s ON s.id = c.record_id "
                       "WHERE c.record = 'security' AND c.field = 'symbol' AND c.old_value = ? "
                       "ORDER BY c.effective DESC, c.id DESC LIMIT 1");
  st.bind(1, symbol);
  if (!st.executeStep()) return std::nullopt;
  return find_security(db, st.getColumn(0).getString());
}

void update_security(Database& db, const Security& s) {
  SQLite::Statement st(db.sql(),
                       "UPDATE security SET symbol = ?, name = ?, lot_size = ?, sector = ? "
                       "WHERE id = ?");
  st.bind(1, s.symbol);
  st.bind(2, s.name);
  st.bind(3, s.lot_size.str());
  bind_optional(st, 4, s.sector);
  st.bind(5, s.id);
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (std::string_view(e.what()).find("UNIQUE") != std::string_view::npos)
      throw InputError(fmt::format("a security with the symbol '{}' exists already", s.symbol));
    throw;
  }
}

void update_account_name(Database& db, std::int64_t id, const std::string& name) {
  SQLite::Statement st(db.sql(), "UPDATE account SET name = ? WHERE id = ?");
  st.bind(1, name);
  st.bind(2, id);
  try {
    st.exec();
  } catch (const SQLite::Exception& e) {
    if (std::string_view(e.what()).find("UNIQUE") != std::string_view::npos)
      throw InputError(fmt::format("an account named '{}' exists already", name));
    throw;
  }
}

}  // namespace keel::store
