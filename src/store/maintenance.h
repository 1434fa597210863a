// Maintenance of the ledger file: SQLite's own checks, online backup, and
// the market-data sanity checks `keel verify` reports.
//
//  - sqlite_problems(): what PRAGMA integrity_check and foreign_key_check
//    report, one line each; empty when the file is sound.
//  - backup_to(): copies the open ledger to `target` through SQLite's online
//    backup API (safe while other keel processes read or write) into an
//    OutputFile (core/files.h): owner-only (0600), a self-contained file in
//    rollback-journal mode, at the final name only once complete, never over
//    an existing file; "-" is standard output. Throws InputError for the
//    target, LedgerError for SQLite's errors.
//  - copy_ledger_file(): the same copy from a closed ledger file, opened
//    read-only, into a new file.
//  - replace_ledger_file(): puts `replacement` (a closed ledger file in the
//    ledger's folder) at `ledger`, keeping the current file aside under a name
//    no file has, "<ledger>.replaced-<UTC time>" with "-2", "-3" ... added if
//    taken; returns that name (nothing when there was no ledger). The current
//    ledger is first folded out of WAL mode, which SQLite allows only when no
//    other connection has it open, and stays under an exclusive lock for the
//    whole swap; a ledger in use is refused with LedgerError and nothing
//    changes. While locked, the old file's -wal, -shm and -journal are removed
//    so that none can pair with the new file; a complete ledger is at the path
//    at every moment (link, then rename), and the folder is fsynced.
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
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "store/database.h"

namespace keel::store {

std::vector<std::string> sqlite_problems(Database& db);
void backup_to(Database& db, const std::filesystem::path& target);
void copy_ledger_file(const std::filesystem::path& from, const std::filesystem::path& to);
std::optional<std::filesystem::path> replace_ledger_file(const std::filesystem::path& ledger,
                                                         const std::filesystem::path& replacement);
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
