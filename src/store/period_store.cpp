#include "store/period_store.h"

#include <SQLiteCpp/Statement.h>

#include <algorithm>
#include <tuple>

#include "store/ledger_store.h"

namespace keel::store {

ImportLinks::ImportLinks(Database& db, std::int64_t run_id)
    : st_(db.sql(), "INSERT INTO import_txn (run_id, txn_id, role) VALUES (?, ?, ?)"),
      run_id_(run_id) {}

void ImportLinks::add(std::int64_t txn_id, ImportRole role) {
  st_.reset();
  st_.bind(1, run_id_);
  st_.bind(2, txn_id);
  st_.bind(3, role == ImportRole::added        ? "added"
              : role == ImportRole::void_entry ? "void"
                                               : "correction");
  st_.exec();
}

void insert_correction(Database& db, const Correction& c) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO correction (new_txn_id, voided_txn_id, ref, run_id) "
                       "VALUES (?, ?, ?, ?)");
  st.bind(1, c.new_txn_id);
  st.bind(2, c.voided_txn_id);
  st.bind(3, c.ref);
  st.bind(4, c.run_id);
  st.exec();
}

std::int64_t insert_reconciliation(Database& db, const Reconciliation& r) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO reconciliation (day, file_name, file_sha256, recorded_at) "
                       "VALUES (?, ?, ?, ?)");
  st.bind(1, r.day.str());
  st.bind(2, r.file_name);
  st.bind(3, r.file_sha256);
  st.bind(4, utc_timestamp());
  st.exec();
  const std::int64_t id = db.sql().getLastInsertRowid();
  SQLite::Statement acc(db.sql(),
                        "INSERT INTO reconciled_account (reconciliation_id, account_id) "
                        "VALUES (?, ?)");
  for (auto account : r.account_ids) {
    acc.reset();
    acc.bind(1, id);
    acc.bind(2, account);
    acc.exec();
  }
  return id;
}

std::vector<PeriodEvent> period_events(Database& db, std::int64_t account_id) {
  // (place among reconciliations, 0 = reconciliation / 1 = reopening, id)
  std::vector<std::tuple<std::int64_t, int, std::int64_t, PeriodEvent>> keyed;
  SQLite::Statement rec(db.sql(),
                        "SELECT r.id, r.day FROM reconciliation r JOIN reconciled_account a "
                        "ON a.reconciliation_id = r.id WHERE a.account_id = ?");
  rec.bind(1, account_id);
  while (rec.executeStep()) {
    PeriodEvent e{PeriodEvent::Kind::reconciled, rec.getColumn(0).getInt64(),
                  Date::parse(rec.getColumn(1).getString())};
    keyed.emplace_back(e.id, 0, e.id, e);
  }
  SQLite::Statement re(db.sql(),
                       "SELECT id, after_reconciliation, from_day FROM period_reopening "
                       "WHERE account_id = ?");
  re.bind(1, account_id);
  while (re.executeStep()) {
    PeriodEvent e{PeriodEvent::Kind::reopened, re.getColumn(0).getInt64(),
                  Date::parse(re.getColumn(2).getString())};
    keyed.emplace_back(re.getColumn(1).getInt64(), 1, e.id, e);
  }
  std::sort(keyed.begin(), keyed.end(), [](const auto& a, const auto& b) {
    return std::tie(std::get<0>(a), std::get<1>(a), std::get<2>(a)) <
           std::tie(std::get<0>(b), std::get<1>(b), std::get<2>(b));
  });
  std::vector<PeriodEvent> out;
  for (auto& k : keyed) out.push_back(std::get<3>(k));
  return out;
}

std::vector<std::pair<std::int64_t, Date>> last_reconciled_days(Database& db) {
  SQLite::Statement st(db.sql(),
                       "SELECT a.account_id, max(r.day) FROM reconciliation r JOIN "
                       "reconciled_account a ON a.reconciliation_id = r.id "
                       "GROUP BY a.account_id ORDER BY a.account_id");
  std::vector<std::pair<std::int64_t, Date>> out;
  while (st.executeStep())
    out.emplace_back(st.getColumn(0).getInt64(), Date::parse(st.getColumn(1).getString()));
  return out;
}

std::int64_t insert_reopening(Database& db, std::int64_t account_id, Date from_day,
                              std::string_view reason) {
  SQLite::Statement st(db.sql(),
                       "INSERT INTO period_reopening (account_id, after_reconciliation, from_day, "
                       "reason, recorded_at) VALUES (?, (SELECT coalesce(max(id), 0) FROM "
                       "reconciliation), ?, ?, ?)");
  st.bind(1, account_id);
  st.bind(2, from_day.str());
  st.bind(3, std::string(reason));
  st.bind(4, utc_timestamp());
  st.exec();
  return db.sql().getLastInsertRowid();
}

}  // namespace keel::store
