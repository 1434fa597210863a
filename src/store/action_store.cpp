#include "store/action_store.h"

#include <SQLiteCpp/SQLiteCpp.h>
#include <fmt/format.h>

#include "core/error.h"
#include "store/ledger_store.h"
#include "store/sql_values.h"

namespace keel::store {

std::int64_t insert_action(Database& db, const CorporateAction& a) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO corporate_action (security_id, date, kind, target_id, ratio, "
                       "cash, cost_percent, in_lieu, voids_id, note, recorded_at) "
                       "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)");
  st.bind(1, a.security_id);
  st.bind(2, a.date.str());
  st.bind(3, std::string(to_string(a.kind)));
  bind_optional(st, 4, a.target_id);
  bind_decimal(st, 5, a.ratio);
  bind_decimal(st, 6, a.cash);
  bind_decimal(st, 7, a.cost_percent);
  bind_decimal(st, 8, a.in_lieu);
  bind_optional(st, 9, a.voids_id);
  bind_optional(st, 10, a.note);
  st.bind(11, utc_timestamp());
  st.exec();
  return db.sql().getLastInsertRowid();
}

std::vector<CorporateAction> list_actions(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT id, security_id, date, kind, target_id, ratio, cash, cost_percent, "
                       "in_lieu, voids_id, note FROM corporate_action ORDER BY date, id");
  std::vector<CorporateAction> out;
  while (st.executeStep()) {
    CorporateAction a;
    a.id = st.getColumn(0).getInt64();
    a.security_id = st.getColumn(1).getInt64();
    a.date = Date::parse(st.getColumn(2).getString());
    const std::string kind = st.getColumn(3).getString();
    a.kind = kind == "void" ? ActionKind::void_entry : parse_action_kind(kind);
    a.target_id = opt_id(st.getColumn(4));
    a.ratio = opt_decimal(st.getColumn(5));
    a.cash = opt_decimal(st.getColumn(6));
    a.cost_percent = opt_decimal(st.getColumn(7));
    a.in_lieu = opt_decimal(st.getColumn(8));
    a.voids_id = opt_id(st.getColumn(9));
    a.note = opt_text(st.getColumn(10));
    out.push_back(std::move(a));
  }
  return out;
}

}  // namespace keel::store
