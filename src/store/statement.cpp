#include "store/statement.h"

namespace keel::store {

Statement::Statement(sqlite3* db, const char* sql) : db_(db) {
  const int rc = sqlite3_prepare_v3(db, sql, -1, SQLITE_PREPARE_PERSISTENT, &st_, nullptr);
  if (rc != SQLITE_OK) throw_sqlite_error(db, rc);
}

}  // namespace keel::store
