// The schema tag every JSON document keel prints carries first:
//   "schema": {"name": "keel.<report>", "version": N}
// docs/schema/<report>.json is the JSON Schema of version N, and
// tests/e2e/test_json_schema.py validates real output against it. Any change
// to a document's members raises its version here and in that file.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <string_view>

namespace keel::report {

inline nlohmann::ordered_json schema_tag(std::string_view report, int version) {
  return {{"name", "keel." + std::string(report)}, {"version", version}};
}

// A document that starts with its schema tag.
inline nlohmann::ordered_json json_document(std::string_view report, int version) {
  nlohmann::ordered_json j;
  j["schema"] = schema_tag(report, version);
  return j;
}

}  // namespace keel::report
