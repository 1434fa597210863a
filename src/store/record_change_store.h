// Store functions for changes of an account's or a security's descriptive
// fields (migration 0006): the record keeps its id, its row takes the new
// values, and the old ones are kept in record_change with the day from which
// the new value holds.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "model/records.h"
#include "model/security.h"
#include "store/database.h"

namespace keel::store {

struct RecordChange {
  std::int64_t id = 0;
  std::string record;  // "account" or "security"
  std::int64_t record_id = 0;
  std::string field;  // name, symbol, sector, lot_size
  std::optional<std::string> old_value, new_value;
  Date effective;  // first day of the new value
};

void insert_record_change(Database& db, const RecordChange& change);
std::vector<RecordChange> list_record_changes(Database& db);  // by effective day, then id
// The security whose symbol was `symbol` before a change (the latest such).
std::optional<Security> find_security_by_former_symbol(Database& db, const std::string& symbol);
// Write the new values of a record in place (its id stays).
void update_security(Database& db, const Security& security);
void update_account_name(Database& db, std::int64_t id, const std::string& name);

}  // namespace keel::store
