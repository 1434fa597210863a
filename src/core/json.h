// JsonWriter: the one way keel writes JSON, as it goes, without building a
// document tree first (a back-test's trades or a screen of thousands of
// names would spend most of a command's time in the tree).
//
// Contract
//  - RFC 8259 text, laid out exactly as nlohmann::json's dump(indent) lays
//    out the same document: with indent >= 0 one member or element per line,
//    indented by `indent` spaces a level, "key": value, and {} / [] when
//    empty; with indent < 0 all on one line without spaces. Members come in
//    the order written. tests/unit/json_test.cpp compares the two.
//  - Strings are escaped as RFC 8259 section 7 asks (", \, control
//    characters; \b \f \n \r \t, else \u00XX); text that is not valid UTF-8
//    is written with each ill-formed sequence replaced by U+FFFD, so a report
//    never stops at text stored by other means.
//  - Numbers: integers as written; doubles in the shortest form that reads
//    back the same, an integral value with ".0", exponents as "1e-05" (as
//    nlohmann writes them); a NaN or an infinity as null. Decimals are
//    written as strings (their canonical text), never as JSON numbers.
//  - Misuse (a value where a key is due, closing what is not open) throws
//    std::logic_error.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/decimal.h"

namespace keel {

class JsonWriter {
 public:
  explicit JsonWriter(std::string& out, int indent = 2) : out_(out), indent_(indent) {}

  JsonWriter& begin_object();
  JsonWriter& end_object();
  JsonWriter& begin_array();
  JsonWriter& end_array();
  JsonWriter& key(std::string_view name);

  JsonWriter& value(std::string_view text);
  JsonWriter& value(const char* text) { return value(std::string_view(text)); }
  JsonWriter& value(const std::string& text) { return value(std::string_view(text)); }
  JsonWriter& value(const Decimal& d) { return value(std::string_view(d.str())); }
  JsonWriter& value(bool b);
  JsonWriter& value(int v) { return value(static_cast<long long>(v)); }
  JsonWriter& value(long v) { return value(static_cast<long long>(v)); }
  JsonWriter& value(long long v);
  JsonWriter& value(unsigned long v) { return value(static_cast<unsigned long long>(v)); }
  JsonWriter& value(unsigned long long v);
  JsonWriter& value(double v);
  JsonWriter& null();
  template <typename T>
  JsonWriter& value(const std::optional<T>& v) {
    return v ? value(*v) : null();
  }
  // An array of strings.
  JsonWriter& value(const std::vector<std::string>& items);

  // key(name).value(v), for brevity.
  template <typename T>
  JsonWriter& member(std::string_view name, const T& v) {
    return key(name).value(v);
  }

 private:
  void before_value();
  void newline(std::size_t depth);
  struct Level {
    bool object;
    bool empty = true;
  };
  std::string& out_;
  int indent_;
  std::vector<Level> stack_;
  bool after_key_ = false;
};

// `text` as a JSON string literal, quotes included (see JsonWriter).
void append_json_string(std::string& out, std::string_view text);
// `x` as JsonWriter writes a double.
void append_json_number(std::string& out, double x);

}  // namespace keel
