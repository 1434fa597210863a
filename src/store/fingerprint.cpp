#include "store/fingerprint.h"

#include <SQLiteCpp/Statement.h>

#include <algorithm>
#include <vector>

namespace keel::store {

std::string content_dump(Database& db) {
  // close_pack is derived from price and rebuilt at will (migration 0011):
  // a report that packs closes changes nothing recorded.
  std::vector<std::string> tables;
  {
    SQLite::Statement st(db.sql(),
                         "SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE "
                         "'sqlite_%' AND name <> 'close_pack' ORDER BY name");
    while (st.executeStep()) tables.push_back(st.getColumn(0).getString());
  }
  std::string dump;
  for (const auto& table : tables) {
    dump += "== " + table + "\n";
    // Table names come from the schema itself, never from a user. Rows are
    // ordered by every column, whatever the table's width.
    SQLite::Statement width(db.sql(), "SELECT count(*) FROM pragma_table_info(?)");
    width.bind(1, table);
    width.executeStep();
    std::string order;
    for (int c = 1; c <= width.getColumn(0).getInt(); ++c)
      order += (c == 1 ? " ORDER BY " : ", ") + std::to_string(c);
    SQLite::Statement st(db.sql(), "SELECT * FROM \"" + table + "\"" + order);
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
