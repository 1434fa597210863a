// Store functions for what imports and reconciliations record beside the
// ledger's rows: which rows an import wrote, corrections of booked rows,
// matched statements and reopened periods (migration 0004).
//
// Contract
//  - Every record is append-only (triggers refuse UPDATE and DELETE).
//  - period_events() lists an account's reconciliations and reopenings in the
//    order they were made; ledger/period.h turns them into the lock.
//  - Bound parameters only; callers wrap writes in a WriteTransaction.
#pragma once

#include <SQLiteCpp/Statement.h>

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "store/database.h"

namespace keel::store {

enum class ImportRole { added, void_entry, correction };
// Records which rows one import run wrote; the statement is prepared once
// for the whole run.
class ImportLinks {
 public:
  ImportLinks(Database& db, std::int64_t run_id);
  void add(std::int64_t txn_id, ImportRole role);

 private:
  SQLite::Statement st_;
  std::int64_t run_id_;
};

struct Correction {
  std::int64_t new_txn_id = 0;
  std::int64_t voided_txn_id = 0;
  std::string ref;
  std::int64_t run_id = 0;
};
void insert_correction(Database& db, const Correction& c);

struct Reconciliation {
  std::int64_t id = 0;
  Date day;
  std::string file_name;
  std::string file_sha256;
  std::string recorded_at;
  std::vector<std::int64_t> account_ids;
};
std::int64_t insert_reconciliation(Database& db, const Reconciliation& r);

struct PeriodEvent {
  enum class Kind { reconciled, reopened } kind = Kind::reconciled;
  std::int64_t id = 0;  // reconciliation or reopening id
  Date day;             // the reconciled day, or the first reopened day
};
// One account's reconciliations and reopenings, oldest first.
std::vector<PeriodEvent> period_events(Database& db, std::int64_t account_id);
// The latest reconciled day of each account (account id -> day).
std::vector<std::pair<std::int64_t, Date>> last_reconciled_days(Database& db);

std::int64_t insert_reopening(Database& db, std::int64_t account_id, Date from_day,
                              std::string_view reason);

}  // namespace keel::store
