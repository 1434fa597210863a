#include "store/statement.h"

#include <fmt/format.h>

namespace keel::store {

std::runtime_error sql_error(sqlite3* db, int rc, std::string_view what) {
  return std::runtime_error(fmt::format("ledger {} failed ({}): {}", what, rc,
                                        db ? sqlite3_errmsg(db) : "no connection"));
}

Statement::Statement(sqlite3* db, const char* sql) : db_(db) {
  const int rc = sqlite3_prepare_v3(db, sql, -1, SQLITE_PREPARE_PERSISTENT, &st_, nullptr);
  if (rc != SQLITE_OK) throw sql_error(db, rc, fmt::format("statement '{}'", sql));
}

}  // namespace keel::store
