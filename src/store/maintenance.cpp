#include "store/maintenance.h"

#include <SQLiteCpp/Backup.h>
#include <SQLiteCpp/Statement.h>
#include <fmt/format.h>
#include <sqlite3.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <utility>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "store/ledger_lock.h"
#include "store/ledger_store.h"
#include "store/sqlite_error.h"

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
  OutputFile out(target, {"backup", /*replace=*/false, /*binary=*/true});
  const fs::path& file = out.path_for_writer();
  {
    SQLite::Database dest(file.string(), SQLite::OPEN_READWRITE);
    try {
      SQLite::Backup backup(dest, db.sql());
      backup.executeStep(-1);
      // A backup is one self-contained file: no write-ahead log beside it.
      dest.exec("PRAGMA journal_mode = DELETE");
    } catch (const SQLite::Exception& e) {
      throw ledger_error(sqlite_code(e), sqlite3_system_errno(dest.getHandle()), e.what(), target,
                         "backup to");
    }
  }
  out.commit();
}

void copy_ledger_file(const fs::path& from, const fs::path& to) {
  create_private_file(to);
  SQLite::Database source(from.string(), SQLite::OPEN_READONLY);
  SQLite::Database dest(to.string(), SQLite::OPEN_READWRITE);
  try {
    SQLite::Backup(dest, source).executeStep(-1);
    dest.exec("PRAGMA journal_mode = DELETE");
  } catch (const SQLite::Exception& e) {
    throw ledger_error(sqlite_code(e), sqlite3_system_errno(dest.getHandle()), e.what(), from,
                       "cannot copy");
  }
}

namespace {

// A name beside `ledger` that no file has, made to point at the ledger's file
// (a second link; or, where links are not possible, the file moved there).
// Returns the name and whether the file was moved.
std::pair<fs::path, bool> keep_aside(const fs::path& ledger) {
  std::string stamp = utc_timestamp();  // 2026-12-01T22:54:20Z
  std::erase(stamp, ':');
  std::erase(stamp, '-');
  const std::string base = ledger.string() + ".replaced-" + stamp;
  for (int n = 1; n < 1000; ++n) {
    const fs::path name = n == 1 ? base : fmt::format("{}-{}", base, n);
    if (::link(ledger.c_str(), name.c_str()) == 0) return {name, false};
    if (errno == EEXIST) continue;
    if (errno != EPERM && errno != ENOTSUP && errno != EOPNOTSUPP && errno != EMLINK)
      throw LedgerError(fmt::format("cannot keep {} aside as {}: {}", ledger.string(),
                                    name.string(), os_error_text(errno)));
    const auto ec = rename_no_replace(ledger, name);
    if (ec == std::errc::file_exists) continue;
    if (ec)
      throw LedgerError(fmt::format("cannot keep {} aside as {}: {}", ledger.string(),
                                    name.string(), os_error_text(ec.value())));
    return {name, true};
  }
  throw LedgerError(
      fmt::format("cannot keep {} aside: {}-2 to -999 are all taken", ledger.string(), base));
}

// Makes a closed ledger file one self-contained file (rollback-journal mode).
void fold_out_of_wal(const fs::path& file) {
  SQLite::Database db(file.string(), SQLite::OPEN_READWRITE);
  try {
    db.exec("PRAGMA journal_mode = DELETE");
  } catch (const SQLite::Exception& e) {
    throw_sqlite_error(db.getHandle(), e.getErrorCode());
  }
}

void remove_companions(const fs::path& ledger) {
  std::error_code ec;
  for (const char* suffix : {"-wal", "-shm", "-journal"}) fs::remove(ledger.string() + suffix, ec);
}

}  // namespace

std::optional<fs::path> replace_ledger_file(const fs::path& ledger, const fs::path& replacement) {
  fold_out_of_wal(replacement);
  remove_companions(replacement);
  const fs::path folder = ledger.has_parent_path() ? ledger.parent_path() : fs::path(".");
  const std::string in_use = fmt::format(
      "ledger {} is in use by another program (another keel command?); nothing was restored; "
      "try again when it has finished",
      ledger.string());
  // Another restore may replace the file between our open and our lock.
  for (int attempt = 0; attempt < 3; ++attempt) {
    std::error_code ec;
    if (!fs::exists(ledger, ec)) {
      const auto moved = rename_no_replace(replacement, ledger);
      if (moved == std::errc::file_exists) continue;
      if (moved)
        throw LedgerError(fmt::format("cannot put the restored ledger at {}: {}", ledger.string(),
                                      os_error_text(moved.value())));
      sync_folder(folder);
      return std::nullopt;
    }
    // keel's own lock first: no keel command has the file open, and none will
    // open it until the swap is done (they then open the new file).
    const auto lock = LedgerLock::acquire(ledger, LedgerLock::Kind::exclusive, 5000, in_use);
    // Declared after the lock, so closed before it is released.
    std::optional<SQLite::Database> current;
    try {
      current.emplace(ledger.string(), SQLite::OPEN_READWRITE | SQLite::OPEN_NOMUTEX);
      current->setBusyTimeout(5000);
      // Every lock taken from here on is kept until the connection closes.
      current->exec("PRAGMA locking_mode = EXCLUSIVE");
      // SQLite leaves WAL mode only when no other connection has the file
      // open; it folds the log into the file on the way out. PERSIST, not
      // DELETE: with an exclusive lock, closing in DELETE mode deletes
      // "<ledger>-journal" by name, by then another process's journal.
      if (current->execAndGet("PRAGMA journal_mode = PERSIST").getString() != "persist")
        throw LedgerError(in_use);
      current->exec("BEGIN EXCLUSIVE");
      current->execAndGet("SELECT count(*) FROM sqlite_schema");
    } catch (const SQLite::Exception& e) {
      const int code = e.getErrorCode();
      if (code == SQLITE_BUSY || code == SQLITE_LOCKED) throw LedgerError(in_use);
      // Not a database at all: nobody can be using it as one; keep it aside as it is.
      if (code != SQLITE_NOTADB)
        throw ledger_error(sqlite_code(e), current ? sqlite3_system_errno(current->getHandle()) : 0,
                           e.what(), ledger);
      current.reset();
    }
    if (current && file_was_replaced(current->getHandle())) continue;
    remove_companions(ledger);
    const auto [aside, moved] = keep_aside(ledger);
    if (::rename(replacement.c_str(), ledger.c_str()) != 0) {
      const int err = errno;
      if (moved)
        ::rename(aside.c_str(), ledger.c_str());
      else
        ::unlink(aside.c_str());
      throw LedgerError(
          fmt::format("cannot put the restored ledger at {}: {}; nothing was restored",
                      ledger.string(), os_error_text(err)));
    }
    if (const auto synced = sync_folder(folder))
      throw LedgerError(fmt::format("restored {}, but its folder could not be synced: {}",
                                    ledger.string(), os_error_text(synced.value())));
    return aside;
  }
  throw LedgerError(fmt::format(
      "ledger {} was replaced by other restores while this one waited; nothing was restored",
      ledger.string()));
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

namespace {

void sql_valid_utf8(sqlite3_context* context, int, sqlite3_value** args) {
  const auto* text = static_cast<const char*>(sqlite3_value_blob(args[0]));
  const auto size = static_cast<std::size_t>(sqlite3_value_bytes(args[0]));
  sqlite3_result_int(context, valid_utf8(std::string_view(text ? text : "", size)) ? 1 : 0);
}

std::string quoted_identifier(const std::string& name) {
  std::string out = "\"";
  for (const char c : name) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

}  // namespace

std::vector<std::string> text_problems(Database& db) {
  db.sql().createFunction("keel_valid_utf8", 1, true, nullptr, &sql_valid_utf8);
  std::vector<std::string> tables;
  {
    SQLite::Statement st(db.sql(),
                         "SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE "
                         "'sqlite\\_%' ESCAPE '\\' ORDER BY name");
    while (st.executeStep()) tables.push_back(st.getColumn(0).getString());
  }
  std::vector<std::string> out;
  for (const auto& table : tables) {
    std::vector<std::string> columns, key;
    {
      // Table and column names come from the schema itself, never from input.
      SQLite::Statement info(db.sql(), "SELECT name, pk FROM pragma_table_info(?) ORDER BY cid");
      info.bind(1, table);
      std::vector<std::pair<int, std::string>> pk;
      while (info.executeStep()) {
        columns.push_back(info.getColumn(0).getString());
        if (const int n = info.getColumn(1).getInt(); n > 0) pk.emplace_back(n, columns.back());
      }
      std::sort(pk.begin(), pk.end());
      for (const auto& [n, name] : pk) key.push_back(name);
      if (key.empty()) key.push_back("rowid");
    }
    std::string key_list;
    for (const auto& k : key) key_list += (key_list.empty() ? "" : ", ") + quoted_identifier(k);
    for (const auto& column : columns) {
      const std::string c = quoted_identifier(column);
      SQLite::Statement st(db.sql(),
                           fmt::format("SELECT {}, {} FROM {} WHERE typeof({}) = 'text' AND NOT "
                                       "keel_valid_utf8({}) ORDER BY {}",
                                       key_list, c, quoted_identifier(table), c, c, key_list));
      while (st.executeStep()) {
        std::string where;
        for (std::size_t i = 0; i < key.size(); ++i)
          where += fmt::format("{}{} {}", i ? ", " : "", key[i],
                               printable(st.getColumn(static_cast<int>(i)).getString()));
        out.push_back(
            fmt::format("table {}, row {}, column {}: '{}' is not valid UTF-8", table, where,
                        column, printable(st.getColumn(static_cast<int>(key.size())).getString())));
      }
    }
  }
  return out;
}

std::vector<std::string> name_warnings(Database& db) {
  // (what, SQL giving a row label and the text)
  static const std::pair<const char*, const char*> kNames[] = {
      {"account name", "SELECT 'account ' || id, name FROM account ORDER BY id"},
      {"symbol", "SELECT 'security ' || id, symbol FROM security ORDER BY id"},
      {"security name", "SELECT 'security ' || id, name FROM security ORDER BY id"},
      {"sector",
       "SELECT 'security ' || id, sector FROM security WHERE sector IS NOT NULL "
       "ORDER BY id"},
      {"metric name", "SELECT 'metric', name FROM metric GROUP BY name ORDER BY name"},
      {"ref", "SELECT 'transaction ' || id, ref FROM txn WHERE ref IS NOT NULL ORDER BY id"},
  };
  std::vector<std::string> out;
  for (const auto& [what, sql] : kNames) {
    SQLite::Statement st(db.sql(), sql);
    while (st.executeStep()) {
      const std::string text = st.getColumn(1).getString();
      if (const auto which = invisible_code_point(text))
        out.push_back(fmt::format("{}: {} '{}' contains {}, an invisible character",
                                  st.getColumn(0).getString(), what, mark_invisible(text), *which));
    }
  }
  return out;
}

std::vector<std::string> future_rows(Database& db, Date today) {
  const std::string day = today.str();
  std::vector<std::string> out;
  // Postings one by one: (what, its date).
  static const char* const kPostings[] = {
      "SELECT 'transaction ' || id || ' (' || kind || ')', date FROM txn WHERE date > ? AND "
      "kind <> 'void' ORDER BY date, id",
      "SELECT 'the split of ' || s.symbol, p.date FROM split p JOIN security s ON s.id = "
      "p.security_id WHERE p.date > ? ORDER BY p.date, s.symbol",
      "SELECT 'corporate action ' || a.id || ' (' || a.kind || ' of ' || s.symbol || ')', a.date "
      "FROM corporate_action a JOIN security s ON s.id = a.security_id WHERE a.date > ? AND "
      "a.kind <> 'void' ORDER BY a.date, a.id",
  };
  for (const char* sql : kPostings) {
    SQLite::Statement st(db.sql(), sql);
    st.bind(1, day);
    while (st.executeStep())
      out.push_back(fmt::format("{} is dated {}, after today ({})",
                                printable(st.getColumn(0).getString()), st.getColumn(1).getString(),
                                day));
  }
  static const std::pair<const char*, const char*> kMarket[] = {
      {"closes are dated", "SELECT count(*), max(date) FROM price WHERE date > ?"},
      {"metric figures become known",
       "SELECT count(*), max(known_on) FROM metric WHERE known_on > ?"},
  };
  for (const auto& [what, sql] : kMarket) {
    SQLite::Statement st(db.sql(), sql);
    st.bind(1, day);
    if (st.executeStep() && st.getColumn(0).getInt64() > 0)
      out.push_back(fmt::format("{} {} after today ({}), the latest on {}",
                                st.getColumn(0).getInt64(), what, day,
                                st.getColumn(1).getString()));
  }
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
    throw ledger_error(sqlite_code(e), 0, e.what(), path, "cannot read the backup");
  }
}

}  // namespace keel::store
