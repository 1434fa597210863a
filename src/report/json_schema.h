// The schema tag every JSON document keel prints carries first:
//   "schema": {"name": "keel.<report>", "version": N}
// docs/schema/<report>.json is the JSON Schema of version N, and
// tests/e2e/test_json_schema.py validates real output against it. Any change
// to a document's members raises its version here and in that file.
#pragma once

#include <string>
#include <string_view>

#include "core/json.h"

namespace keel::report {

// Opens the document's object and writes its schema tag as the first member;
// the caller writes the rest and closes the object.
inline JsonWriter& begin_document(JsonWriter& j, std::string_view report, int version) {
  j.begin_object().key("schema").begin_object();
  j.member("name", "keel." + std::string(report)).member("version", version);
  return j.end_object();
}

}  // namespace keel::report
