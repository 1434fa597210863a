// Binding optional values to statement parameters and reading nullable
// columns back, the same way in every store file: an unset value is SQL NULL,
// a Decimal travels as its canonical text.
#pragma once

#include <SQLiteCpp/SQLiteCpp.h>

#include <cstdint>
#include <optional>
#include <string>

#include "core/decimal.h"

namespace keel::store {

template <typename T>
void bind_optional(SQLite::Statement& st, int index, const std::optional<T>& value) {
  if (value)
    st.bind(index, *value);
  else
    st.bind(index);
}

inline void bind_decimal(SQLite::Statement& st, int index, const std::optional<Decimal>& value) {
  if (value)
    st.bind(index, value->str());
  else
    st.bind(index);
}

inline std::optional<std::string> opt_text(const SQLite::Column& c) {
  if (c.isNull()) return std::nullopt;
  return c.getString();
}
inline std::optional<Decimal> opt_decimal(const SQLite::Column& c) {
  if (c.isNull()) return std::nullopt;
  return Decimal::parse(c.getString());
}
inline std::optional<std::int64_t> opt_id(const SQLite::Column& c) {
  if (c.isNull()) return std::nullopt;
  return c.getInt64();
}

}  // namespace keel::store
