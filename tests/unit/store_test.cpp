// Opening ledgers: migrations, version checks and file safety.
#include <SQLiteCpp/Database.h>
#include <doctest/doctest.h>
#include <sys/stat.h>

#include <filesystem>
#include <fstream>

#include "core/error.h"
#include "store/database.h"
#include "store/migrations.h"

using namespace keel;
namespace fs = std::filesystem;

namespace {

struct ScratchDir {
  fs::path path =
      fs::temp_directory_path() / ("keel-store-test-" + std::to_string(::getpid()) + "-" +
                                   std::to_string(reinterpret_cast<std::uintptr_t>(this)));
  ScratchDir() { fs::create_directories(path); }
  ~ScratchDir() { fs::remove_all(path); }
};

std::string file_bytes(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), {}};
}

}  // namespace

TEST_CASE("store: a new ledger is migrated to the latest schema version") {
  ScratchDir dir;
  store::OpenOptions options;
  options.access = store::Access::create;
  auto db = store::Database::open(dir.path / "ledger.db", options);
  CHECK(db.schema_version() == store::Database::latest_schema_version());
  CHECK(store::Database::latest_schema_version() == store::migrations().back().version);
}

TEST_CASE("store: migrations are numbered from 1 without gaps") {
  int expected = 1;
  for (const auto& m : store::migrations()) CHECK(m.version == expected++);
}

TEST_CASE("store: a new ledger and its folder are private to the owner") {
  ScratchDir dir;
  store::OpenOptions options;
  options.access = store::Access::create;
  const fs::path file = dir.path / "sub" / "ledger.db";
  store::Database::open(file, options);
  struct stat st {};
  REQUIRE(::stat(file.c_str(), &st) == 0);
  CHECK((st.st_mode & 0777) == 0600);
  REQUIRE(::stat(file.parent_path().c_str(), &st) == 0);
  CHECK((st.st_mode & 0777) == 0700);
}

TEST_CASE("store: a missing ledger is not created unless asked") {
  ScratchDir dir;
  CHECK_THROWS_AS(store::Database::open(dir.path / "none.db"), LedgerError);
  CHECK_FALSE(fs::exists(dir.path / "none.db"));
}

TEST_CASE("store: a ledger from a newer keel is refused and left untouched") {
  ScratchDir dir;
  const fs::path file = dir.path / "future.db";
  {
    SQLite::Database raw(file.string(), SQLite::OPEN_READWRITE | SQLite::OPEN_CREATE);
    raw.exec("CREATE TABLE t (x INTEGER)");
    raw.exec("PRAGMA user_version = 999");
  }
  ::chmod(file.c_str(), 0600);
  const std::string before = file_bytes(file);
  CHECK_THROWS_WITH_AS(store::Database::open(file),
                       doctest::Contains("has schema version 999, newer than this keel"),
                       LedgerError);
  CHECK(file_bytes(file) == before);
}

TEST_CASE("store: a ledger others can write to is refused unless overridden") {
  ScratchDir dir;
  store::OpenOptions options;
  options.access = store::Access::create;
  const fs::path file = dir.path / "shared.db";
  store::Database::open(file, options);
  ::chmod(file.c_str(), 0666);
  CHECK_THROWS_WITH_AS(store::Database::open(file),
                       doctest::Contains("can be written by other users"), LedgerError);
  store::OpenOptions unsafe;
  unsafe.allow_unsafe_permissions = true;
  CHECK_NOTHROW(store::Database::open(file, unsafe));
}

TEST_CASE("store: a file that is not a ledger is refused clearly") {
  ScratchDir dir;
  const fs::path file = dir.path / "notes.db";
  std::ofstream(file) << "plain notes, not a database";
  ::chmod(file.c_str(), 0600);
  CHECK_THROWS_WITH_AS(store::Database::open(file), doctest::Contains("cannot open ledger"),
                       LedgerError);
}

TEST_CASE("store: another program's SQLite database is refused and left untouched") {
  ScratchDir dir;
  const fs::path file = dir.path / "other.db";
  {
    SQLite::Database other(file.string(), SQLite::OPEN_READWRITE | SQLite::OPEN_CREATE);
    other.exec("CREATE TABLE notes (id INTEGER PRIMARY KEY, body TEXT)");
    other.exec("INSERT INTO notes (body) VALUES ('kept')");
  }
  ::chmod(file.c_str(), 0600);
  const std::string before = file_bytes(file);
  store::OpenOptions options;
  options.access = store::Access::create;
  CHECK_THROWS_WITH_AS(
      store::Database::open(file, options),
      (file.string() + " is an SQLite database but not a keel ledger; choose another with --db")
          .c_str(),
      LedgerError);
  CHECK(file_bytes(file) == before);
  CHECK_FALSE(fs::exists(file.string() + "-wal"));
}

TEST_CASE("store: a write transaction rolls back unless committed") {
  auto db = store::Database::in_memory();
  {
    store::WriteTransaction tx(db);
    db.sql().exec(
        "INSERT INTO account (name, currency, created_at) VALUES ('Scratch', 'EUR', 'now')");
  }
  CHECK(db.sql().execAndGet("SELECT count(*) FROM account").getInt() == 0);
}

TEST_CASE("store: an empty file is not a ledger: refused by name and left empty") {
  ScratchDir dir;
  const fs::path file = dir.path / "empty.db";
  std::ofstream(file).close();
  ::chmod(file.c_str(), 0600);
  for (const auto access : {store::Access::read, store::Access::write}) {
    store::OpenOptions options;
    options.access = access;
    CHECK_THROWS_WITH_AS(
        store::Database::open(file, options),
        (file.string() + " is an empty file, not a keel ledger; only 'keel init' makes a ledger; "
                         "choose another with --db")
            .c_str(),
        LedgerError);
  }
  CHECK(fs::file_size(file) == 0);
  for (const char* suffix : {"-wal", "-shm", "-journal"})
    CHECK_FALSE(fs::exists(file.string() + suffix));
}

TEST_CASE("store: init makes a ledger of an empty file") {
  ScratchDir dir;
  const fs::path file = dir.path / "empty.db";
  std::ofstream(file).close();
  ::chmod(file.c_str(), 0600);
  store::OpenOptions options;
  options.access = store::Access::create;
  auto db = store::Database::open(file, options);
  CHECK(db.schema_version() == store::Database::latest_schema_version());
}

TEST_CASE("store: a write to a ledger file replaced since it was opened is refused") {
  ScratchDir dir;
  const fs::path file = dir.path / "ledger.db";
  store::OpenOptions create;
  create.access = store::Access::create;
  store::Database::open(file, create);
  auto db = store::Database::open(file);
  CHECK_FALSE(db.file_replaced());
  fs::rename(file, dir.path / "aside.db");
  fs::copy_file(dir.path / "aside.db", file);
  CHECK(db.file_replaced());
  CHECK_THROWS_WITH_AS(store::WriteTransaction{db},
                       ("ledger " + file.string() +
                        " was replaced or moved while this command ran (by 'keel restore'?); "
                        "nothing was changed; run the command again")
                           .c_str(),
                       LedgerError);
}
