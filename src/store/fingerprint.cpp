#include "store/fingerprint.h"

#include <SQLiteCpp/Statement.h>

#include <vector>

namespace keel::store {

std::string content_dump(Database& db) {
  std::vector<std::string> tables;
  {
    SQLite::Statement st(db.sql(),
                         "SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE "
                         "'sqlite_%' ORDER BY name");
    while (st.executeStep()) tables.push_back(st.getColumn(0).getString());
  }
  std::string dump;
  for (const auto& table : tables) {
    dump += "== " + table + "\n";
    // Table names come from the schema itself, never from a user.
    SQLite::Statement st(db.sql(), "SELECT * FROM \"" + table + "\" ORDER BY 1, 2, 3");
    while (st.executeStep()) {
      for (int c = 0; c < st.getColumnCount(); ++c) {
        const auto col = st.getColumn(c);
        dump += col.isNull() ? std::string("NULL") : col.getString();
        dump += '\x1f';
      }
      dump += '\n';
    }
  }
  return dump;
}

}  // namespace keel::store
