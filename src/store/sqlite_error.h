// One way to report SQLite's errors: every failure of a ledger database
// becomes a LedgerError (exit 3) that says in words what happened.
//
// Contract
//  - sqlite_reason() names the problem: "disk full (no space left on the
//    device)" for SQLITE_FULL and for an I/O error whose system error is
//    ENOSPC (how SQLite reports most full disks), "disk quota exceeded", "the
//    folder is read-only", "the file is damaged", ...; otherwise SQLite's own
//    text. `system_errno` is sqlite3_system_errno() (0 if unknown).
//  - ledger_error() builds the LedgerError. Busy and locked ledgers, and a
//    ledger file moved or replaced while the command ran, get a sentence of
//    their own that says what to do; everything else reads
//    "<doing> <file>: <reason>" (doing defaults to "ledger").
//  - throw_sqlite_error() is for code holding a raw handle: it reads the
//    extended code, the system error and the file name from the handle.
//  - The SQLiteCpp form is for exceptions caught where the handle is gone (the
//    command line's last catch): the file and the system error are those a
//    Database's destructor saw while the exception unwound (unwound_ledger()).
// Every wrapper in src/store/ and the command line use these; nothing else
// turns an SQLite error into a message.
#pragma once

#include <sqlite3.h>

#include <exception>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>

#include "core/error.h"

namespace SQLite {
class Exception;
}

namespace keel::store {

std::string sqlite_reason(int extended_code, int system_errno, std::string_view sqlite_text);

LedgerError ledger_error(int extended_code, int system_errno, std::string_view sqlite_text,
                         const std::filesystem::path& file, std::string_view doing = "ledger");
LedgerError ledger_error(const SQLite::Exception& e, std::string_view doing = "ledger");
// For the command line's last catch: the LedgerError when `e` is an SQLiteCpp
// exception that escaped every wrapper, else nothing.
std::optional<LedgerError> escaped_ledger_error(const std::exception& e);
[[noreturn]] void throw_sqlite_error(sqlite3* handle, int rc, std::string_view doing = "ledger");

// An SQLiteCpp exception's extended code, or its primary code where it has
// none (SQLiteCpp's backup errors).
int sqlite_code(const SQLite::Exception& e);

// True for SQLite's "file moved or replaced since it was opened" refusal.
bool is_moved_error(int extended_code);

// The last ledger connection closed while an exception was unwinding (see
// Database's destructor): its file and sqlite3_system_errno().
struct UnwoundLedger {
  std::filesystem::path file;
  int system_errno = 0;
};
UnwoundLedger& unwound_ledger();

}  // namespace keel::store
