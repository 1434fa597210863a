// The one SQLite error policy (store/sqlite_error.h): every failure of the
// ledger database is a LedgerError that says what happened in words.
#include "store/sqlite_error.h"

#include <SQLiteCpp/Database.h>
#include <doctest/doctest.h>
#include <sqlite3.h>

#include <cerrno>
#include <filesystem>
#include <stdexcept>

#include "core/decimal.h"
#include "core/error.h"
#include "model/security.h"
#include "store/database.h"
#include "store/ledger_store.h"
#include "store/market_data.h"
#include "test_files.h"

using namespace keel;

TEST_CASE("sqlite errors: a full disk says disk full, whichever way SQLite reports it") {
  const std::string full = "disk full (no space left on the device)";
  CHECK(store::sqlite_reason(SQLITE_FULL, 0, "database or disk is full") == full);
  // A failed write, fsync or WAL index growth is an I/O error carrying ENOSPC.
  CHECK(store::sqlite_reason(SQLITE_IOERR_WRITE, ENOSPC, "disk I/O error") == full);
  CHECK(store::sqlite_reason(SQLITE_IOERR_FSYNC, ENOSPC, "disk I/O error") == full);
  CHECK(store::sqlite_reason(SQLITE_IOERR_SHMSIZE, ENOSPC, "disk I/O error") == full);
  CHECK(store::sqlite_reason(SQLITE_IOERR_WRITE, EDQUOT, "disk I/O error") ==
        "disk quota exceeded");
  CHECK(store::sqlite_reason(SQLITE_IOERR_READ, EIO, "disk I/O error") ==
        "disk I/O error (input/output error)");
}

TEST_CASE("sqlite errors: busy and locked ledgers read the same, wherever they were hit") {
  for (const int code : {SQLITE_BUSY, SQLITE_BUSY_SNAPSHOT, SQLITE_LOCKED, SQLITE_BUSY_TIMEOUT}) {
    CAPTURE(code);
    CHECK(std::string(store::ledger_error(code, 0, "database is locked", "/l/keel.db").what()) ==
          "ledger is busy: another keel is using it; try again in a moment");
  }
}

TEST_CASE("sqlite errors: a ledger replaced while a command ran says so") {
  CHECK(std::string(store::ledger_error(SQLITE_READONLY_DBMOVED, 0,
                                        "attempt to write a readonly database", "/l/keel.db")
                        .what()) ==
        "ledger /l/keel.db was replaced or moved while this command ran (by 'keel restore'?); "
        "nothing was changed; run the command again");
}

TEST_CASE("sqlite errors: read-only and damaged files are explained") {
  CHECK(std::string(store::ledger_error(SQLITE_READONLY_DIRECTORY, 0, "x", "/l/keel.db").what()) ==
        "ledger /l/keel.db: its folder is read-only, and SQLite needs to make files there");
  CHECK(std::string(store::ledger_error(SQLITE_READONLY, 0, "x", "/l/keel.db").what()) ==
        "ledger /l/keel.db: the file or its folder is read-only");
  CHECK(std::string(store::ledger_error(SQLITE_CORRUPT, 0, "x", "/l/keel.db").what()) ==
        "ledger /l/keel.db: the file is damaged (database disk image is malformed); restore a "
        "backup with 'keel restore'");
}

TEST_CASE("sqlite errors: a raw handle's error names its file and keeps SQLite's words") {
  test::TempDir dir;
  const auto file = dir.path() / "ledger.db";
  SQLite::Database db(file.string(), SQLite::OPEN_READWRITE | SQLite::OPEN_CREATE);
  sqlite3* h = db.getHandle();
  sqlite3_stmt* st = nullptr;
  const int rc = sqlite3_prepare_v2(h, "SELECT * FROM no_such_table", -1, &st, nullptr);
  CHECK_THROWS_WITH_AS(store::throw_sqlite_error(h, rc),
                       ("ledger " + file.string() + ": no such table: no_such_table").c_str(),
                       LedgerError);
}

// Queries a missing table in a new ledger `file`; `check` sees SQLiteCpp's
// exception after the ledger has closed, as the command line's last catch does.
namespace {
template <class Check>
void after_failed_query(const std::filesystem::path& file, Check check) {
  store::OpenOptions options;
  options.access = store::Access::create;
  try {
    auto db = store::Database::open(file, options);
    db.sql().exec("SELECT * FROM no_such_table");
    FAIL("no exception");
  } catch (const SQLite::Exception& e) {
    check(e);
  }
}
}  // namespace

TEST_CASE("sqlite errors: an exception that closed the ledger is reported with its file") {
  test::TempDir dir;
  const auto file = dir.path() / "ledger.db";
  after_failed_query(file, [&](const SQLite::Exception& e) {
    CHECK(std::string(store::ledger_error(e).what()) ==
          "ledger " + file.string() + ": no such table: no_such_table");
  });
}

TEST_CASE(
    "sqlite errors: the command line's last catch turns an escaped SQLite exception into a "
    "LedgerError") {
  test::TempDir dir;
  const auto file = dir.path() / "ledger.db";
  after_failed_query(file, [&](const std::exception& e) {
    const auto escaped = store::escaped_ledger_error(e);
    REQUIRE(escaped.has_value());
    CHECK(std::string(escaped->what()) ==
          "ledger " + file.string() + ": no such table: no_such_table");
  });
}

TEST_CASE("sqlite errors: the last catch leaves other exceptions alone") {
  CHECK_FALSE(store::escaped_ledger_error(std::runtime_error("not a ledger error")).has_value());
}

TEST_CASE(
    "sqlite errors: market intake's statements fail as LedgerError, not as an internal error") {
  // Its raw statement wrapper threw std::runtime_error (exit 70) where the
  // others gave exit 3.
  auto db = store::Database::in_memory();
  Security s;
  s.symbol = "QRX";
  s.name = "Quarix Holdings";
  s.kind = SecurityKind::stock;
  s.currency = "EUR";
  s.lot_size = Decimal::parse("1");
  store::insert_security(db, s);
  store::WriteTransaction tx(db);
  store::MarketWriter writer(db, false);
  db.sql().exec("PRAGMA query_only = ON");  // every write now fails in SQLite
  std::string existing;
  CHECK_THROWS_WITH_AS(writer.split(writer.security("QRX"), "2024-06-03", "2", existing),
                       "ledger: the file or its folder is read-only", LedgerError);
  db.sql().exec("PRAGMA query_only = OFF");
}
