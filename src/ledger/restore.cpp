#include "ledger/restore.h"

#include <SQLiteCpp/Backup.h>
#include <fmt/format.h>
#include <unistd.h>

#include "core/error.h"
#include "ledger/verify.h"
#include "store/database.h"
#include "store/ledger_store.h"
#include "store/maintenance.h"

namespace keel::ledger {
namespace fs = std::filesystem;

namespace {

// Copies `backup` to `target` through SQLite, leaving `backup` unopened for writing.
void copy_ledger(const fs::path& backup, const fs::path& target) {
  store::create_private_file(target);
  try {
    SQLite::Database source(backup.string(), SQLite::OPEN_READONLY);
    SQLite::Database dest(target.string(), SQLite::OPEN_READWRITE);
    SQLite::Backup(dest, source).executeStep(-1);
  } catch (const SQLite::Exception& e) {
    throw LedgerError(fmt::format("cannot copy {}: {}", backup.string(), e.what()));
  }
}

void remove_quietly(const fs::path& p) {
  std::error_code ec;
  for (const char* suffix : {"", "-wal", "-shm"}) fs::remove(p.string() + suffix, ec);
}

std::string stamp() {
  std::string t = store::utc_timestamp();  // 2026-12-01T22:54:20Z
  std::erase(t, ':');
  std::erase(t, '-');
  return t;
}

}  // namespace

RestoreResult restore_backup(const fs::path& ledger, const fs::path& backup) {
  const auto facts = store::inspect_backup(backup);
  if (!facts.problems.empty())
    throw LedgerError(fmt::format("{} is damaged ({}); nothing was restored", backup.string(),
                                  facts.problems.front()));
  const fs::path staging =
      ledger.string() + fmt::format(".restoring-{}", static_cast<long>(::getpid()));
  remove_quietly(staging);
  RestoreResult result;
  try {
    copy_ledger(backup, staging);
    store::OpenOptions options;
    auto copy = store::Database::open(staging, options);  // brings an older schema up to date
    const auto report = verify(copy);
    if (!report.ok())
      throw LedgerError(fmt::format("{} does not verify ({}); nothing was restored",
                                    backup.string(), report.problems.front()));
    result.transactions = report.transactions;
    copy.sql().exec("PRAGMA wal_checkpoint(TRUNCATE)");
  } catch (...) {
    remove_quietly(staging);
    throw;
  }
  if (fs::exists(ledger)) {
    {
      // Fold the write-ahead log into the file so the copy kept aside is whole.
      store::OpenOptions options;
      options.allow_unsafe_permissions = true;
      auto current = store::Database::open(ledger, options);
      current.sql().exec("PRAGMA wal_checkpoint(TRUNCATE)");
    }
    const fs::path aside = ledger.string() + ".replaced-" + stamp();
    fs::rename(ledger, aside);
    result.replaced_kept_at = aside;
  }
  fs::rename(staging, ledger);
  remove_quietly(staging);
  return result;
}

}  // namespace keel::ledger
