// Database: an open keel ledger file, brought up to the current schema.
//
// Contract
//  - open() with Access::create (keel init) creates the file (mode 0600,
//    parent folder 0700) or takes an existing empty one; no other access ever
//    creates a ledger. A file that is empty or holds no keel ledger is refused
//    with LedgerError naming it, and left exactly as it was.
//  - It turns on foreign keys, WAL and a busy timeout, then applies every
//    migration newer than the file's PRAGMA user_version, each in its own
//    transaction. A file whose version is newer than this program is refused
//    with LedgerError and left untouched; so is a file others may write to,
//    unless OpenOptions::allow_unsafe_permissions, and an SQLite database of
//    another program (version 0 but already holding tables).
//  - Access::read opens read-only when the file or its folder cannot be
//    written (WAL without -shm: as an immutable snapshot, refused if a -wal
//    holds changes that could not be read). Access::write and ::create refuse
//    such a ledger before touching it.
//  - The opened file is registered with protect_from_output (core/files.h).
//    The connection holds a shared LedgerLock from before SQLite opens the
//    file until after it has closed it, so keel restore cannot replace the file
//    meanwhile; a write transaction on a file replaced by other means since it
//    was opened is refused.
//  - SQLite errors follow store/sqlite_error.h.
//  - The object owns the SQLite handle (RAII); it is movable, not copyable.
//  - This is the only place outside src/store/ that hands out SQL access, and
//    only to store-layer code: other modules call the store functions.
#pragma once

#include <SQLiteCpp/Database.h>
#include <sqlite3.h>

#include <filesystem>
#include <memory>
#include <string>

#include "store/ledger_lock.h"

namespace keel::store {

enum class Access {
  read,    // reports: read-only where the file or its folder cannot be written
  write,   // commands that change the ledger
  create,  // keel init: may create the file
};

struct OpenOptions {
  Access access = Access::write;
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
  Database& operator=(Database&& other) noexcept;
  static Database in_memory();  // for tests: a fresh, fully migrated ledger

  int schema_version();
  static int latest_schema_version();
  const std::filesystem::path& path() const { return path_; }
  SQLite::Database& sql() { return *db_; }
  bool read_only() const { return read_only_; }
  // Whether the file at path() is no longer the one this connection reads
  // (renamed or replaced since it was opened).
  bool file_replaced();

 private:
  Database(std::unique_ptr<SQLite::Database> db, std::filesystem::path path, LedgerLock lock = {});
  static Database open_read_only(const std::filesystem::path& path);
  void require_ledger();
  void migrate();

  LedgerLock lock_;  // first: released only after the connection has closed
  std::unique_ptr<SQLite::Database> db_;
  std::filesystem::path path_;
  bool read_only_ = false;
};

// Creates an empty file readable and writable by the owner only (0600), and
// its missing parent folders with 0700. Throws LedgerError.
void create_private_file(const std::filesystem::path& path);

// Whether the file a connection reads is no longer the one at its path
// (SQLITE_FCNTL_HAS_MOVED: renamed, replaced or deleted since it was opened).
bool file_was_replaced(sqlite3* handle);

// RAII write transaction taken with BEGIN IMMEDIATE, so two writers never
// deadlock halfway: the second waits up to the busy timeout, then fails with
// LedgerError("ledger is busy"). Rolls back unless commit() was called;
// the destructor never throws. Errors follow store/sqlite_error.h.
class WriteTransaction {
 public:
  explicit WriteTransaction(Database& db);  // refuses a file replaced since it was opened
  ~WriteTransaction();
  WriteTransaction(const WriteTransaction&) = delete;
  WriteTransaction& operator=(const WriteTransaction&) = delete;
  void commit();

 private:
  Database& db_;
  bool open_ = false;
};

// RAII read transaction taken with BEGIN DEFERRED: every statement run inside
// it reads one state of the ledger, under one read lock instead of one each
// (for a reader of thousands of names, about a twentieth of its time). Not
// for writes: close packs, for one, are kept only outside a transaction
// (store/market_rows.h). Inside a transaction already open it does nothing.
// Ends in the destructor, which never throws. Errors of BEGIN follow
// store/sqlite_error.h.
class ReadTransaction {
 public:
  explicit ReadTransaction(Database& db);
  ~ReadTransaction();
  ReadTransaction(const ReadTransaction&) = delete;
  ReadTransaction& operator=(const ReadTransaction&) = delete;

 private:
  Database& db_;
  bool open_ = false;
};

}  // namespace keel::store
