#include "store/fx_store.h"

#include <SQLiteCpp/Statement.h>

namespace keel::store {

Upsert upsert_fx_rate(Database& db, const FxRateRow& row, bool replace, std::string& existing) {
  SQLite::Statement find(db.sql(),
                         "SELECT rate FROM fx_rate WHERE base = ? AND quote = ? AND date = ?");
  find.bind(1, row.base);
  find.bind(2, row.quote);
  find.bind(3, row.date.str());
  const std::string rate = row.rate.str();
  if (find.executeStep()) {
    existing = find.getColumn(0).getString();
    if (existing == rate) return Upsert::unchanged;
    if (!replace) return Upsert::conflict;
    SQLite::Statement up(db.sql(),
                         "UPDATE fx_rate SET rate = ? WHERE base = ? AND quote = ? AND date = ?");
    up.bind(1, rate);
    up.bind(2, row.base);
    up.bind(3, row.quote);
    up.bind(4, row.date.str());
    up.exec();
    return Upsert::replaced;
  }
  SQLite::Statement ins(db.sql(),
                        "INSERT INTO fx_rate (base, quote, date, rate) VALUES (?, ?, ?, ?)");
  ins.bind(1, row.base);
  ins.bind(2, row.quote);
  ins.bind(3, row.date.str());
  ins.bind(4, rate);
  ins.exec();
  return Upsert::added;
}

namespace {
std::vector<FxRateRow> rate_rows(SQLite::Statement& st) {
  std::vector<FxRateRow> out;
  while (st.executeStep())
    out.push_back(FxRateRow{st.getColumn(0).getString(), st.getColumn(1).getString(),
                            Date::parse(st.getColumn(2).getString()),
                            Decimal::parse(st.getColumn(3).getString())});
  return out;
}
}  // namespace

std::vector<FxRateRow> list_fx_rates(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT base, quote, date, rate FROM fx_rate ORDER BY base, quote, date");
  return rate_rows(st);
}

std::vector<FxRateRow> list_fx_rates(Database& db, const std::string& currency, Date until) {
  SQLite::Statement st(
      db.sql(),
      "SELECT base, quote, date, rate FROM fx_rate WHERE (base = ?1 OR quote = ?1) "
      "AND date <= ?2 ORDER BY base, quote, date");
  st.bind(1, currency);
  st.bind(2, until.str());
  return rate_rows(st);
}

}  // namespace keel::store
