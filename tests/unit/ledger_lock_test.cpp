// LedgerLock: keel's own lock that keeps restore from replacing a ledger file
// a keel command has open.
#include "store/ledger_lock.h"

#include <doctest/doctest.h>

#include <cstdlib>
#include <filesystem>
#include <string>

#include "core/error.h"
#include "store/database.h"
#include "test_files.h"

using namespace keel;
namespace fs = std::filesystem;

namespace {

fs::path new_ledger(const test::TempDir& dir) {
  const fs::path file = dir.path() / "ledger.db";
  store::OpenOptions options;
  options.access = store::Access::create;
  store::Database::open(file, options);
  return file;
}

// Whether another process could take the file out of WAL mode right now,
// which SQLite allows only when no connection holds the file (sqlite3 tool, no
// waiting). Run only where the answer must be no.
bool others_can_leave_wal(const fs::path& file) {
  const std::string command = "sqlite3 '" + file.string() +
                              "' 'PRAGMA busy_timeout = 0; PRAGMA journal_mode = DELETE;' "
                              "2>/dev/null | grep -qx delete";
  return std::system(command.c_str()) == 0;
}

}  // namespace

TEST_CASE("ledger lock: restore's exclusive lock is refused while a connection is open") {
  test::TempDir dir;
  const auto file = new_ledger(dir);
  auto db = store::Database::open(file);
  CHECK_THROWS_WITH_AS(
      store::LedgerLock::acquire(file, store::LedgerLock::Kind::exclusive, 50, "in use"), "in use",
      LedgerError);
}

TEST_CASE("ledger lock: closing one connection keeps SQLite's locks of another on the file") {
  // Closing any descriptor of a file drops the process's POSIX locks on it;
  // the lock's descriptor must outlive every connection to the file.
  test::TempDir dir;
  const auto file = new_ledger(dir);
  auto first = store::Database::open(file);
  { auto second = store::Database::open(file); }
  CHECK_FALSE(others_can_leave_wal(file));
}

TEST_CASE("ledger lock: a missing file gives an empty lock") {
  test::TempDir dir;
  const auto lock =
      store::LedgerLock::acquire(dir.path() / "none.db", store::LedgerLock::Kind::shared, 50);
  CHECK_FALSE(lock.held());
}
