#include "store/fx_store.h"

#include <SQLiteCpp/Statement.h>

namespace keel::store {

FxWriter::FxWriter(Database& db)
    : find_(db.sql(), "SELECT rate FROM fx_rate WHERE base = ? AND quote = ? AND date = ?"),
      update_(db.sql(), "UPDATE fx_rate SET rate = ? WHERE base = ? AND quote = ? AND date = ?"),
      insert_(db.sql(), "INSERT INTO fx_rate (base, quote, date, rate) VALUES (?, ?, ?, ?)") {}

Upsert FxWriter::upsert(const FxRateRow& row, bool replace, std::string& existing) {
  const std::string date = row.date.str();
  const std::string rate = row.rate.str();
  find_.reset();
  find_.bind(1, row.base);
  find_.bind(2, row.quote);
  find_.bind(3, date);
  const bool found = find_.executeStep();
  if (found) existing = find_.getColumn(0).getString();
  find_.reset();  // no read left open between rows
  if (found) {
    if (existing == rate) return Upsert::unchanged;
    if (!replace) return Upsert::conflict;
    update_.reset();
    update_.bind(1, rate);
    update_.bind(2, row.base);
    update_.bind(3, row.quote);
    update_.bind(4, date);
    update_.exec();
    return Upsert::replaced;
  }
  insert_.reset();
  insert_.bind(1, row.base);
  insert_.bind(2, row.quote);
  insert_.bind(3, date);
  insert_.bind(4, rate);
  insert_.exec();
  return Upsert::added;
}

Upsert upsert_fx_rate(Database& db, const FxRateRow& row, bool replace, std::string& existing) {
  return FxWriter(db).upsert(row, replace, existing);
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
