// JSON text: every JSON document keel prints is written by dump_json().
//
// Contract
//  - The same text as nlohmann's dump(indent) (indent < 0: one line), except
//    that a string which is not valid UTF-8 (text put into a ledger by other
//    means than keel) is written with each ill-formed byte replaced by U+FFFD
//    instead of failing: a report must not stop at it, and `keel verify`
//    names the table, row and column that hold it. Never throws for text.
#pragma once

#include <nlohmann/json.hpp>
#include <string>

namespace keel::io {

template <typename Json>
std::string dump_json(const Json& j, int indent = 2) {
  return j.dump(indent, ' ', false, Json::error_handler_t::replace);
}

}  // namespace keel::io
