// The schema migrations compiled into keel, in ascending version order.
// Version N is migrations/NNNN_*.sql; a ledger at PRAGMA user_version = N has
// had every migration up to and including N applied.
#pragma once

#include <string_view>
#include <vector>

namespace keel::store {

struct Migration {
  int version;
  std::string_view file_name;
  std::string_view sql;
};

const std::vector<Migration>& migrations();

}  // namespace keel::store
