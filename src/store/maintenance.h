// Maintenance of the ledger file: SQLite's own checks, online backup, and
// the market-data sanity checks `keel verify` reports.
//
//  - sqlite_problems(): what PRAGMA integrity_check and foreign_key_check
//    report, one line each; empty when the file is sound.
//  - backup_to(): copies the open ledger to `target` through SQLite's online
//    backup API (safe while other keel processes read or write), creating the
//    file owner-only (0600). Refuses an existing target. Throws LedgerError.
//  - data_warnings(): facts worth a person's look that the schema cannot
//    forbid: metrics known before their period ends, transactions in a
//    security dated before its first close.
//  - text_problems(): every text cell of every table that is not valid UTF-8
//    (keel never writes one; it comes from outside), naming the table, the
//    row by its key and the column, with the bytes shown escaped.
//  - name_warnings(): names, symbols, sectors, metric names and references
//    stored with an invisible character (as check_identifier refuses today),
//    naming it.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "core/date.h"
#include "store/database.h"

namespace keel::store {

std::vector<std::string> sqlite_problems(Database& db);
void backup_to(Database& db, const std::filesystem::path& target);
std::vector<std::string> data_warnings(Database& db);
std::vector<std::string> text_problems(Database& db);
std::vector<std::string> name_warnings(Database& db);
// Rows dated after `today`: each transaction and split, and per table the
// closes and metric figures (count and latest day).
std::vector<std::string> future_rows(Database& db, Date today);

// Opens `path` read-only without migrating; for checking a backup before
// trusting it. Throws LedgerError if it is not a keel ledger this program can read.
struct BackupFacts {
  int schema_version = 0;
  std::vector<std::string> problems;  // sqlite_problems() of the file
};
BackupFacts inspect_backup(const std::filesystem::path& path);

}  // namespace keel::store
