#include "store/sqlite_error.h"

#include <SQLiteCpp/Exception.h>
#include <fmt/format.h>

#include <cerrno>

#include "core/files.h"
#include "core/text.h"

namespace keel::store {

std::string sqlite_reason(int extended_code, int system_errno, std::string_view sqlite_text) {
  const int primary = extended_code & 0xff;
  // SQLite reports a full disk as SQLITE_FULL where it can tell, and as an
  // I/O error otherwise (a failed fsync, a WAL index it cannot grow).
  if (primary == SQLITE_FULL) return os_error_text(ENOSPC);
  if ((primary == SQLITE_IOERR || primary == SQLITE_CANTOPEN) &&
      (system_errno == ENOSPC || system_errno == EDQUOT || system_errno == EFBIG))
    return os_error_text(system_errno);
  switch (extended_code) {
    case SQLITE_READONLY_DIRECTORY:
      return "its folder is read-only, and SQLite needs to make files there";
    case SQLITE_READONLY_ROLLBACK:
      return "an interrupted change must be rolled back, and the file or its folder is read-only";
    default:
      break;
  }
  switch (primary) {
    case SQLITE_READONLY:
      return "the file or its folder is read-only";
    case SQLITE_CORRUPT:
      return "the file is damaged (database disk image is malformed); restore a backup with "
             "'keel restore'";
    case SQLITE_NOTADB:
      return "file is not a database";
    case SQLITE_IOERR:
    case SQLITE_CANTOPEN:
      if (system_errno != 0)
        return fmt::format("{} ({})", sqlite_text, os_error_text(system_errno));
      return std::string(sqlite_text);
    default:
      return std::string(sqlite_text);
  }
}

int sqlite_code(const SQLite::Exception& e) {
  return e.getExtendedErrorCode() >= 0 ? e.getExtendedErrorCode() : e.getErrorCode();
}

bool is_moved_error(int extended_code) {
  return extended_code == SQLITE_READONLY_DBMOVED;
}

LedgerError ledger_error(int extended_code, int system_errno, std::string_view sqlite_text,
                         const std::filesystem::path& file, std::string_view doing) {
  const int primary = extended_code & 0xff;
  if (primary == SQLITE_BUSY || primary == SQLITE_LOCKED)
    return LedgerError("ledger is busy: another keel is using it; try again in a moment");
  std::string shown;
  if (!file.empty()) {
    shown = " ";  // appended, not "" + text: GCC 12 -O3 warns on the insert (-Wrestrict)
    shown += printable(file.string());
  }
  if (is_moved_error(extended_code))
    return LedgerError(fmt::format(
        "ledger{} was replaced or moved while this command ran (by 'keel restore'?); nothing "
        "was changed; run the command again",
        shown));
  return LedgerError(fmt::format("{}{}: {}", doing, shown,
                                 sqlite_reason(extended_code, system_errno, sqlite_text)));
}

LedgerError ledger_error(const SQLite::Exception& e, std::string_view doing) {
  const UnwoundLedger& last = unwound_ledger();
  return ledger_error(sqlite_code(e), last.system_errno, e.what(), last.file, doing);
}

std::optional<LedgerError> escaped_ledger_error(const std::exception& e) {
  if (const auto* sqlite = dynamic_cast<const SQLite::Exception*>(&e)) return ledger_error(*sqlite);
  return std::nullopt;
}

void throw_sqlite_error(sqlite3* handle, int rc, std::string_view doing) {
  const char* name = handle ? sqlite3_db_filename(handle, "main") : nullptr;
  const int extended = handle ? sqlite3_extended_errcode(handle) : rc;
  // The handle's code is the latest error; `rc` says which one was meant.
  const int code = (extended & 0xff) == (rc & 0xff) ? extended : rc;
  throw ledger_error(code, handle ? sqlite3_system_errno(handle) : 0,
                     handle ? sqlite3_errmsg(handle) : sqlite3_errstr(rc),
                     name ? std::filesystem::path(name) : std::filesystem::path(), doing);
}

UnwoundLedger& unwound_ledger() {
  static thread_local UnwoundLedger last;
  return last;
}

}  // namespace keel::store
