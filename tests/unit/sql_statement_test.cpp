// The statement wrapper (store/statement.h): a column of the current row
// read once answers for its null test, its text and its integer.
#include <doctest/doctest.h>
#include <sqlite3.h>

#include <string_view>

#include "store/statement.h"

using namespace keel;

TEST_CASE("sql statement: a column read once gives its null test, text and integer") {
  sqlite3* db = nullptr;
  REQUIRE(sqlite3_open_v2(":memory:", &db, SQLITE_OPEN_READWRITE | SQLITE_OPEN_NOMUTEX, nullptr) ==
          SQLITE_OK);
  {
    store::Statement st(db, "SELECT 'QRX 12.5', NULL, 42, '', 'x' || char(0) || 'y'");
    REQUIRE(st.next());
    const auto text = st.value(0);
    CHECK_FALSE(text.null());
    CHECK(text.text() == "QRX 12.5");
    const auto null = st.value(1);
    CHECK(null.null());
    CHECK(null.text().empty());
    const auto number = st.value(2);
    CHECK_FALSE(number.null());
    CHECK(number.integer() == 42);
    CHECK(number.text() == "42");
    const auto empty = st.value(3);
    CHECK_FALSE(empty.null());  // an empty text is not NULL
    CHECK(empty.text().empty());
    CHECK(st.value(4).text() == std::string_view("x\0y", 3));  // the length, not the first NUL
    CHECK_FALSE(st.next());
  }
  sqlite3_close(db);
}
