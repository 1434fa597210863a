#include "store/maintenance.h"

#include <SQLiteCpp/Backup.h>
#include <SQLiteCpp/Statement.h>
#include <fmt/format.h>

#include "core/error.h"

namespace keel::store {
namespace fs = std::filesystem;

namespace {

std::vector<std::string> sqlite_problems(SQLite::Database& sql) {
  std::vector<std::string> out;
  {
    SQLite::Statement st(sql, "PRAGMA integrity_check");
    while (st.executeStep()) {
      const std::string line = st.getColumn(0).getString();
      if (line != "ok") out.push_back("integrity: " + line);
    }
  }
  SQLite::Statement st(sql, "PRAGMA foreign_key_check");
  while (st.executeStep())
    out.push_back(fmt::format("foreign key: table {} row {} refers to a missing row of {}",
                              st.getColumn(0).getString(), st.getColumn(1).getInt64(),
                              st.getColumn(2).getString()));
  return out;
}

}  // namespace

std::vector<std::string> sqlite_problems(Database& db) {
  return sqlite_problems(db.sql());
}

void backup_to(Database& db, const fs::path& target) {
  if (fs::exists(target))
    throw LedgerError(
        fmt::format("{} already exists; choose a new file for the backup", target.string()));
  create_private_file(target);
  try {
    SQLite::Database dest(target.string(), SQLite::OPEN_READWRITE);
    SQLite::Backup backup(dest, db.sql());
    backup.executeStep(-1);
    // A backup is one self-contained file: no write-ahead log beside it.
    dest.exec("PRAGMA journal_mode = DELETE");
  } catch (const SQLite::Exception& e) {
    std::error_code ec;
    fs::remove(target, ec);
    throw LedgerError(fmt::format("backup to {} failed: {}", target.string(), e.what()));
  }
}

std::vector<std::string> data_warnings(Database& db) {
  std::vector<std::string> out;
  {
    SQLite::Statement st(db.sql(),
                         "SELECT s.symbol, m.name, m.date, m.known_on FROM metric m JOIN security "
                         "s ON s.id = m.security_id WHERE m.known_on < m.date ORDER BY 1, 2, 3");
    while (st.executeStep())
      out.push_back(
          fmt::format("metric {} of {} for {} is marked known on {}, before its period "
                      "ended",
                      st.getColumn(1).getString(), st.getColumn(0).getString(),
                      st.getColumn(2).getString(), st.getColumn(3).getString()));
  }
  SQLite::Statement st(db.sql(),
                       "SELECT t.id, t.date, s.symbol, first.d FROM txn t "
                       "JOIN security s ON s.id = t.security_id "
                       "JOIN (SELECT security_id, min(date) AS d FROM price GROUP BY "
                       "security_id) first ON first.security_id = t.security_id "
                       "WHERE t.kind IN ('buy', 'sell') AND t.date < first.d ORDER BY t.id");
  while (st.executeStep())
    out.push_back(fmt::format("transaction {} on {} trades {}, whose first close is on {}",
                              st.getColumn(0).getInt64(), st.getColumn(1).getString(),
                              st.getColumn(2).getString(), st.getColumn(3).getString()));
  return out;
}

BackupFacts inspect_backup(const fs::path& path) {
  if (!fs::exists(path)) throw LedgerError(fmt::format("no file at {}", path.string()));
  try {
    SQLite::Database sql(path.string(), SQLite::OPEN_READONLY);
    BackupFacts facts;
    facts.schema_version = sql.execAndGet("PRAGMA user_version").getInt();
    const bool has_ledger =
        sql.execAndGet("SELECT count(*) FROM sqlite_schema WHERE name IN ('account', 'txn')")
            .getInt() == 2;
    if (!has_ledger) throw LedgerError(fmt::format("{} is not a keel ledger", path.string()));
    if (facts.schema_version > Database::latest_schema_version())
      throw LedgerError(fmt::format("{} has schema version {}, newer than this keel ({})",
                                    path.string(), facts.schema_version,
                                    Database::latest_schema_version()));
    facts.problems = sqlite_problems(sql);
    return facts;
  } catch (const SQLite::Exception& e) {
    throw LedgerError(fmt::format("{} cannot be read as a ledger: {}", path.string(), e.what()));
  }
}

}  // namespace keel::store
