// Statement: one prepared SQLite statement on the ledger's raw handle, for
// store/ code that reads or writes many rows (the bulk writers and the
// market-data readers).
//
// Contract
//  - Parameters are bound, never spliced into SQL. Text is bound without a
//    copy (SQLITE_STATIC): it must stay alive until the statement is reset,
//    which every run and every finished row loop does.
//  - next() steps to the next row (false at the end, and the statement is
//    then reset); the column accessors read the current row, and the views
//    they return stay valid until the next step or reset.
//  - value(col) is the current row's column read once: its null test, text
//    and integer then cost no further call into the statement (each
//    sqlite3_column_* call costs about as much as decoding a short value).
//    Like every column accessor, it belongs to the connection's one thread
//    (the ledger is opened without SQLite's mutexes).
//  - A failure of SQLite throws through the ledger's one error policy
//    (store/sqlite_error.h): a LedgerError saying in words what happened.
//  - Not copyable; it borrows the connection, which must outlive it.
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <string>
#include <string_view>

#include "store/sqlite_error.h"

namespace keel::store {

class Statement {
 public:
  Statement(sqlite3* db, const char* sql);
  ~Statement() { sqlite3_finalize(st_); }
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;

  Statement& bind(int i, std::int64_t v) {
    sqlite3_bind_int64(st_, i, v);
    return *this;
  }
  Statement& bind(int i, std::string_view v) {
    sqlite3_bind_text(st_, i, v.data(), static_cast<int>(v.size()), SQLITE_STATIC);
    return *this;
  }
  // Bytes bound as a BLOB, without a copy (as text is).
  Statement& bind_blob(int i, std::string_view v) {
    sqlite3_bind_blob(st_, i, v.data(), static_cast<int>(v.size()), SQLITE_STATIC);
    return *this;
  }
  // Text that ends with a NUL: SQLite then uses it in place even where it
  // needs a terminated string (the GLOB checks), instead of copying it.
  Statement& bind_terminated(int i, const char* z) {
    sqlite3_bind_text(st_, i, z, -1, SQLITE_STATIC);
    return *this;
  }
  // Runs a statement that returns no rows; gives sqlite3_changes().
  int run() {
    const int rc = sqlite3_step(st_);
    sqlite3_reset(st_);
    if (rc != SQLITE_DONE) throw_sqlite_error(db_, rc);
    return sqlite3_changes(db_);
  }
  // Runs a write; false (and nothing changed) on a constraint violation.
  bool try_run() {
    const int rc = sqlite3_step(st_);
    sqlite3_reset(st_);
    if (rc == SQLITE_DONE) return true;
    if ((rc & 0xff) == SQLITE_CONSTRAINT) return false;
    throw_sqlite_error(db_, rc);
  }
  // Steps once; true with a row. At the end the statement is reset.
  bool next() {
    const int rc = sqlite3_step(st_);
    if (rc == SQLITE_ROW) return true;
    sqlite3_reset(st_);
    if (rc != SQLITE_DONE) throw_sqlite_error(db_, rc);
    return false;
  }
  // Ends a row loop early.
  void reset() { sqlite3_reset(st_); }

  std::string_view text(int col) const {
    const auto* p = reinterpret_cast<const char*>(sqlite3_column_text(st_, col));
    return p ? std::string_view(p, static_cast<std::size_t>(sqlite3_column_bytes(st_, col)))
             : std::string_view{};
  }
  std::string_view blob(int col) const {
    const auto* p = static_cast<const char*>(sqlite3_column_blob(st_, col));
    return p ? std::string_view(p, static_cast<std::size_t>(sqlite3_column_bytes(st_, col)))
             : std::string_view{};
  }
  std::int64_t integer(int col) const { return sqlite3_column_int64(st_, col); }
  bool null(int col) const { return sqlite3_column_type(st_, col) == SQLITE_NULL; }

  // One column of the current row; valid until the next step or reset.
  class Value {
   public:
    explicit Value(sqlite3_value* v) : v_(v) {}
    bool null() const { return sqlite3_value_type(v_) == SQLITE_NULL; }
    // Empty for NULL.
    std::string_view text() const {
      const auto* p = reinterpret_cast<const char*>(sqlite3_value_text(v_));
      return p ? std::string_view(p, static_cast<std::size_t>(sqlite3_value_bytes(v_)))
               : std::string_view{};
    }
    std::int64_t integer() const { return sqlite3_value_int64(v_); }

   private:
    sqlite3_value* v_;
  };
  Value value(int col) const { return Value(sqlite3_column_value(st_, col)); }

 private:
  sqlite3* db_;
  sqlite3_stmt* st_ = nullptr;
};

}  // namespace keel::store
