#include "store/fingerprint.h"

#include <SQLiteCpp/Statement.h>

#include <algorithm>
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
    SQLite::Statement count(db.sql(), "SELECT count(*) FROM pragma_table_info(?)");
    count.bind(1, table);
    count.executeStep();
    std::string order = "1";
    for (int c = 2; c <= std::min(3, count.getColumn(0).getInt()); ++c)
      order += ", " + std::to_string(c);
    SQLite::Statement st(db.sql(), "SELECT * FROM \"" + table + "\" ORDER BY " + order);
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
