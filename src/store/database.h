// Database: an open keel ledger file, brought up to the current schema.
//
// Contract
//  - open() creates the file (mode 0600, parent folder 0700) when asked to,
//    turns on foreign keys, WAL and a busy timeout, then applies every
//    migration newer than the file's PRAGMA user_version, each in its own
//    transaction. A file whose version is newer than this program is refused
//    with LedgerError and left untouched; so is a file others may write to,
//    unless OpenOptions::allow_unsafe_permissions, and an SQLite database of
//    another program (version 0 but already holding tables).
//  - The object owns the SQLite handle (RAII); it is movable, not copyable.
//  - This is the only place outside src/store/ that hands out SQL access, and
//    only to store-layer code: other modules call the store functions.
#pragma once

#include <SQLiteCpp/Database.h>

#include <filesystem>
#include <memory>
#include <string>

namespace keel::store {

struct OpenOptions {
  bool create = false;                    // create the file if missing
  bool allow_unsafe_permissions = false;  // open even if group/others can write
  int busy_timeout_ms = 5000;
};

class Database {
 public:
  static Database open(const std::filesystem::path& path, const OpenOptions& options = {});
  // Records the file and its system error for the error policy when closed
  // by an exception (store/sqlite_error.h).
  ~Database();
  Database(Database&&) noexcept = default;
  Database& operator=(Database&&) noexcept = default;
  static Database in_memory();  // for tests: a fresh, fully migrated ledger

  int schema_version();
  static int latest_schema_version();
  const std::filesystem::path& path() const { return path_; }
  SQLite::Database& sql() { return *db_; }

 private:
  Database(std::unique_ptr<SQLite::Database> db, std::filesystem::path path);
  void migrate();

  std::unique_ptr<SQLite::Database> db_;
  std::filesystem::path path_;
};

// Creates an empty file readable and writable by the owner only (0600), and
// its missing parent folders with 0700. Throws LedgerError.
void create_private_file(const std::filesystem::path& path);

// RAII write transaction taken with BEGIN IMMEDIATE, so two writers never
// deadlock halfway: the second waits up to the busy timeout, then fails with
// LedgerError("ledger is busy"). Rolls back unless commit() was called;
// the destructor never throws. Errors follow store/sqlite_error.h.
class WriteTransaction {
 public:
  explicit WriteTransaction(Database& db);
  ~WriteTransaction();
  WriteTransaction(const WriteTransaction&) = delete;
  WriteTransaction& operator=(const WriteTransaction&) = delete;
  void commit();

 private:
  SQLite::Database& db_;
  bool open_ = false;
};

}  // namespace keel::store
