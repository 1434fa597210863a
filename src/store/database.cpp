#include "store/database.h"

#include <fmt/format.h>
#include <sqlite3.h>
#include <sys/stat.h>

#include <exception>
#include <system_error>

#include "core/error.h"
#include "store/migrations.h"
#include "store/sqlite_error.h"

namespace keel::store {
namespace fs = std::filesystem;

void create_private_file(const fs::path& path) {
  if (path.has_parent_path() && !fs::exists(path.parent_path())) {
    std::error_code ec;
    fs::create_directories(path.parent_path(), ec);
    if (ec)
      throw LedgerError(
          fmt::format("cannot create folder {}: {}", path.parent_path().string(), ec.message()));
    fs::permissions(path.parent_path(), fs::perms::owner_all, ec);
  }
  // Create the empty file with owner-only permissions before SQLite opens it,
  // so no window exists in which others could read it.
  const mode_t old_mask = ::umask(077);
  FILE* f = std::fopen(path.c_str(), "ab");
  ::umask(old_mask);
  if (!f) throw LedgerError(fmt::format("cannot create ledger {}", path.string()));
  std::fclose(f);
  ::chmod(path.c_str(), 0600);
}

namespace {

void check_permissions(const fs::path& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) return;
  if (st.st_mode & (S_IWGRP | S_IWOTH))
    throw LedgerError(fmt::format(
        "ledger {} can be written by other users (mode {:o}); fix it with 'chmod 600 {}' "
        "or pass --allow-unsafe-permissions",
        path.string(), st.st_mode & 0777, path.string()));
}

}  // namespace

Database::Database(std::unique_ptr<SQLite::Database> db, fs::path path)
    : db_(std::move(db)), path_(std::move(path)) {}

Database::~Database() {
  if (db_ && std::uncaught_exceptions() > 0)
    unwound_ledger() = {path_, sqlite3_system_errno(db_->getHandle())};
}

int Database::latest_schema_version() {
  return migrations().empty() ? 0 : migrations().back().version;
}

int Database::schema_version() {
  return db_->execAndGet("PRAGMA user_version").getInt();
}

Database Database::open(const fs::path& path, const OpenOptions& options) {
  const bool exists = fs::exists(path);
  if (!exists && !options.create)
    throw LedgerError(fmt::format(
        "no ledger at {}; create one with 'keel init' or choose another with --db", path.string()));
  if (!exists) create_private_file(path);
  if (exists && !options.allow_unsafe_permissions) check_permissions(path);
  std::unique_ptr<SQLite::Database> handle;
  try {
    // keel uses each connection from one thread only: skip SQLite's per-call mutex.
    handle = std::make_unique<SQLite::Database>(path.string(),
                                                SQLite::OPEN_READWRITE | SQLite::OPEN_NOMUTEX);
    handle->setBusyTimeout(options.busy_timeout_ms);
    // Reading the header catches a file that is not a database before any write.
    handle->exec("PRAGMA schema_version");
  } catch (const SQLite::Exception& e) {
    const int system_errno = handle ? sqlite3_system_errno(handle->getHandle()) : 0;
    throw ledger_error(e.getExtendedErrorCode(), system_errno, e.what(), path,
                       "cannot open ledger");
  }
  Database db(std::move(handle), path);
  db.migrate();
  return db;
}

Database Database::in_memory() {
  auto handle = std::make_unique<SQLite::Database>(":memory:", SQLite::OPEN_READWRITE);
  Database db(std::move(handle), ":memory:");
  db.migrate();
  return db;
}

void Database::migrate() {
  const int current = schema_version();
  if (current > latest_schema_version())
    throw LedgerError(
        fmt::format("ledger {} has schema version {}, newer than this keel understands ({}); "
                    "use a newer keel",
                    path_.string(), current, latest_schema_version()));
  // Version 0 with tables already in it is some other program's database:
  // leave it exactly as it is rather than add the ledger's tables to it.
  if (current == 0 && db_->execAndGet("SELECT count(*) FROM sqlite_master").getInt() > 0)
    throw LedgerError(
        fmt::format("{} is an SQLite database but not a keel ledger; choose another with --db",
                    path_.string()));
  db_->exec("PRAGMA foreign_keys = ON");
  if (path_ != ":memory:") db_->exec("PRAGMA journal_mode = WAL");
  db_->exec("PRAGMA synchronous = NORMAL");
  for (const Migration& m : migrations()) {
    if (m.version <= current) continue;
    WriteTransaction tx(*this);
    try {
      db_->exec(std::string(m.sql));
      db_->exec(fmt::format("PRAGMA user_version = {}", m.version));
    } catch (const SQLite::Exception& e) {
      throw_sqlite_error(db_->getHandle(), e.getErrorCode(),
                         fmt::format("migration {} failed on ledger", m.file_name));
    }
    tx.commit();
  }
}

WriteTransaction::WriteTransaction(Database& db) : db_(db.sql()) {
  try {
    db_.exec("BEGIN IMMEDIATE");
  } catch (const SQLite::Exception& e) {
    throw_sqlite_error(db_.getHandle(), e.getErrorCode());
  }
  open_ = true;
}

WriteTransaction::~WriteTransaction() {
  if (!open_) return;
  try {
    db_.exec("ROLLBACK");
  } catch (...) {
    // A failed rollback leaves SQLite to roll back on close; never throw here.
  }
}

void WriteTransaction::commit() {
  try {
    db_.exec("COMMIT");
  } catch (const SQLite::Exception& e) {
    throw_sqlite_error(db_.getHandle(), e.getErrorCode());
  }
  open_ = false;
}

}  // namespace keel::store
