#include "store/database.h"

#include <fcntl.h>
#include <fmt/format.h>
#include <sqlite3.h>
#include <sys/stat.h>
#include <unistd.h>

#include <exception>
#include <optional>
#include <system_error>

#include "core/error.h"
#include "core/files.h"
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

fs::path folder_of(const fs::path& p) {
  return p.has_parent_path() ? p.parent_path() : fs::path(".");
}

// Why this process cannot change the ledger (SQLite makes -wal, -shm and
// -journal files beside it), or nothing when it can.
std::optional<std::string> cannot_write(const fs::path& path) {
  if (::faccessat(AT_FDCWD, path.c_str(), W_OK, AT_EACCESS) != 0)
    return fmt::format("the file is read-only ({})", os_error_text(errno));
  if (::faccessat(AT_FDCWD, folder_of(path).c_str(), W_OK | X_OK, AT_EACCESS) != 0)
    return fmt::format("its folder is read-only ({})", os_error_text(errno));
  return std::nullopt;
}

// A URI for sqlite3_open_v2: the characters SQLite's URI parser reads
// specially are escaped.
std::string file_uri(const fs::path& path, std::string_view query) {
  std::string uri = "file:";
  for (const char c : fs::absolute(path).string()) {
    if (c == '%' || c == '?' || c == '#')
      uri += fmt::format("%{:02x}", static_cast<unsigned char>(c));
    else
      uri += c;
  }
  return uri + "?" + std::string(query);
}

std::unique_ptr<SQLite::Database> connect(const std::string& name, int flags, int busy_ms) {
  // keel uses each connection from one thread only: skip SQLite's per-call mutex.
  auto handle = std::make_unique<SQLite::Database>(name, flags | SQLite::OPEN_NOMUTEX);
  handle->setBusyTimeout(busy_ms);
  // Reading the header catches a file that is not a database before any write.
  handle->exec("PRAGMA schema_version");
  return handle;
}

[[noreturn]] void open_failed(const SQLite::Exception& e,
                              const std::unique_ptr<SQLite::Database>& h, const fs::path& path) {
  const int system_errno = h ? sqlite3_system_errno(h->getHandle()) : 0;
  throw ledger_error(sqlite_code(e), system_errno, e.what(), path, "cannot open ledger");
}

}  // namespace

Database::Database(std::unique_ptr<SQLite::Database> db, fs::path path, LedgerLock lock)
    : lock_(std::move(lock)), db_(std::move(db)), path_(std::move(path)) {}

Database& Database::operator=(Database&& other) noexcept {
  if (this != &other) {
    db_.reset();  // close before letting go of the lock
    lock_ = std::move(other.lock_);
    db_ = std::move(other.db_);
    path_ = std::move(other.path_);
    read_only_ = other.read_only_;
  }
  return *this;
}

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

bool file_was_replaced(sqlite3* handle) {
  int moved = 0;
  return sqlite3_file_control(handle, "main", SQLITE_FCNTL_HAS_MOVED, &moved) == SQLITE_OK &&
         moved != 0;
}

bool Database::file_replaced() {
  return path_ != ":memory:" && file_was_replaced(db_->getHandle());
}

Database Database::open(const fs::path& path, const OpenOptions& options) {
  protect_from_output(path);
  std::error_code ec;
  const auto status = fs::status(path, ec);
  if (fs::is_directory(status))
    throw LedgerError(fmt::format("cannot open ledger {}: it is a folder", path.string()));
  const bool exists = fs::exists(status);
  if (!exists && options.access != Access::create)
    throw LedgerError(fmt::format(
        "no ledger at {}; create one with 'keel init' or choose another with --db", path.string()));
  if (!exists) create_private_file(path);
  if (exists && !options.allow_unsafe_permissions) check_permissions(path);
  if (const auto why = cannot_write(path)) {
    if (options.access != Access::read)
      throw LedgerError(fmt::format(
          "ledger {} cannot be changed here: {}; this command writes to it", path.string(), *why));
    return open_read_only(path);
  }
  // The lock keeps keel restore out; a file moved by other means while we
  // opened it is opened again by its path.
  for (int attempt = 0; attempt < 3; ++attempt) {
    auto lock = LedgerLock::acquire(path, LedgerLock::Kind::shared, options.busy_timeout_ms);
    std::unique_ptr<SQLite::Database> handle;
    try {
      handle = connect(path.string(), SQLite::OPEN_READWRITE, options.busy_timeout_ms);
    } catch (const SQLite::Exception& e) {
      open_failed(e, handle, path);
    }
    Database db(std::move(handle), path, std::move(lock));
    try {
      if (db.file_replaced()) continue;
      if (options.access != Access::create) db.require_ledger();
      db.migrate();
      if (db.file_replaced()) continue;
    } catch (...) {
      if (db.file_replaced()) continue;
      throw;
    }
    return db;
  }
  throw LedgerError(fmt::format(
      "ledger {} was replaced three times while opening it; run the command again", path.string()));
}

Database Database::open_read_only(const fs::path& path) {
  auto lock = LedgerLock::acquire(path, LedgerLock::Kind::shared, OpenOptions{}.busy_timeout_ms);
  std::unique_ptr<SQLite::Database> handle;
  const int flags = SQLite::OPEN_READONLY | SQLite::OPEN_URI;
  try {
    try {
      handle = connect(file_uri(path, "mode=ro"), flags, OpenOptions{}.busy_timeout_ms);
    } catch (const SQLite::Exception& e) {
      // A WAL ledger whose folder is read-only and which has no -shm cannot be
      // opened for reading, unless read as an immutable snapshot; that would
      // leave out what a -wal holds, so only when there is none.
      const int code = sqlite_code(e);
      if (code != SQLITE_READONLY_DIRECTORY && (code & 0xff) != SQLITE_CANTOPEN) throw;
      const fs::path wal = path.string() + "-wal";
      std::error_code ec;
      if (fs::exists(wal, ec) && fs::file_size(wal, ec) > 0)
        throw LedgerError(fmt::format(
            "ledger {}: its write-ahead log {} holds changes not yet in the file, and they cannot "
            "be read while the folder is read-only; run keel once where the folder can be "
            "written",
            path.string(), wal.string()));
      handle = connect(file_uri(path, "mode=ro&immutable=1"), flags, OpenOptions{}.busy_timeout_ms);
    }
  } catch (const SQLite::Exception& e) {
    open_failed(e, handle, path);
  }
  Database db(std::move(handle), path, std::move(lock));
  db.read_only_ = true;
  db.require_ledger();
  const int version = db.schema_version();
  if (version < latest_schema_version())
    throw LedgerError(fmt::format(
        "ledger {} has schema version {} and needs an update to version {}, which cannot be "
        "written while the file or its folder is read-only",
        path.string(), version, latest_schema_version()));
  db.migrate();  // checks the version; nothing to apply
  return db;
}

void Database::require_ledger() {
  if (schema_version() != 0) return;
  if (db_->execAndGet("SELECT count(*) FROM sqlite_master").getInt() > 0)
    throw LedgerError(
        fmt::format("{} is an SQLite database but not a keel ledger; choose another with --db",
                    path_.string()));
  std::error_code ec;
  throw LedgerError(fmt::format(
      "{} is {}, not a keel ledger; only 'keel init' makes a ledger; choose another with --db",
      path_.string(), fs::file_size(path_, ec) == 0 ? "an empty file" : "an empty database"));
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
  if (read_only_) return;
  if (path_ != ":memory:") db_->exec("PRAGMA journal_mode = WAL");
  db_->exec("PRAGMA synchronous = NORMAL");
  // A migration may rebuild a table that others refer to (SQLite's procedure
  // for the schema changes ALTER TABLE cannot make): foreign keys are off
  // while it runs and checked in full before it commits. SQLite ignores the
  // setting inside a transaction, so it changes around each one.
  for (const Migration& m : migrations()) {
    if (m.version <= current) continue;
    // Declared before the transaction, so it turns checks on again after the
    // transaction has committed or rolled back.
    struct ChecksBackOn {
      SQLite::Database& db;
      ~ChecksBackOn() {
        try {
          db.exec("PRAGMA foreign_keys = ON");
        } catch (...) {
          // Never throw from a destructor; every open turns checks on again.
        }
      }
    } back_on{*db_};
    db_->exec("PRAGMA foreign_keys = OFF");
    WriteTransaction tx(*this);
    try {
      db_->exec(std::string(m.sql));
      db_->exec(fmt::format("PRAGMA user_version = {}", m.version));
    } catch (const SQLite::Exception& e) {
      throw_sqlite_error(db_->getHandle(), e.getErrorCode(),
                         fmt::format("migration {} failed on ledger", m.file_name));
    }
    SQLite::Statement check(*db_, "PRAGMA foreign_key_check");
    if (check.executeStep())
      throw LedgerError(
          fmt::format("migration {} failed on ledger {}: a row of {} refers to a missing row of {}",
                      m.file_name, path_.string(), check.getColumn(0).getString(),
                      check.getColumn(2).getString()));
    tx.commit();
  }
}

ReadTransaction::ReadTransaction(Database& db) : db_(db) {
  if (sqlite3_get_autocommit(db_.sql().getHandle()) == 0) return;
  try {
    db_.sql().exec("BEGIN DEFERRED");
    open_ = true;
  } catch (const SQLite::Exception& e) {
    throw_sqlite_error(db_.sql().getHandle(), e.getErrorCode());
  }
}

ReadTransaction::~ReadTransaction() {
  if (!open_) return;
  // Nothing was written: ending it either way loses nothing.
  sqlite3* h = db_.sql().getHandle();
  if (sqlite3_exec(h, "COMMIT", nullptr, nullptr, nullptr) != SQLITE_OK)
    sqlite3_exec(h, "ROLLBACK", nullptr, nullptr, nullptr);
}

WriteTransaction::WriteTransaction(Database& db) : db_(db) {
  try {
    db_.sql().exec("BEGIN IMMEDIATE");
  } catch (const SQLite::Exception& e) {
    throw_sqlite_error(db_.sql().getHandle(), e.getErrorCode());
  }
  // Writing to a file moved aside would lose the change, and in WAL mode pair
  // this file's log with whatever now has the name. (The destructor does not
  // run for a constructor that throws: roll back here.)
  if (db_.file_replaced()) {
    try {
      db_.sql().exec("ROLLBACK");
    } catch (...) {
      // Closing the connection rolls back too.
    }
    throw ledger_error(SQLITE_READONLY_DBMOVED, 0, "", db_.path());
  }
  open_ = true;
}

WriteTransaction::~WriteTransaction() {
  if (!open_) return;
  try {
    db_.sql().exec("ROLLBACK");
  } catch (...) {
    // A failed rollback leaves SQLite to roll back on close; never throw here.
  }
}

void WriteTransaction::commit() {
  try {
    db_.sql().exec("COMMIT");
  } catch (const SQLite::Exception& e) {
    throw_sqlite_error(db_.sql().getHandle(), e.getErrorCode());
  }
  open_ = false;
}

}  // namespace keel::store
