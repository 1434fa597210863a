// JsonWriter against Debian's nlohmann-json (3.11): the same document gives
// the same text, indented and on one line; doubles read back exactly.
#include "core/json.h"

#include <doctest/doctest.h>

#include <cstdlib>
#include <cstring>
#include <limits>
#include <nlohmann/json.hpp>
#include <random>

using keel::JsonWriter;
using Json = nlohmann::ordered_json;

namespace {

// One document written both ways.
struct Both {
  std::string mine;
  Json theirs;
};

Both sample(int indent) {
  Both b;
  JsonWriter w(b.mine, indent);
  w.begin_object();
  w.member("name", "Kestrel \"Looms\"\n\ttab\x01\x1f\x7f/");
  w.member("count", 42).member("negative", -7LL).member("flag", true).member("off", false);
  w.key("nothing").null();
  w.key("empty_object").begin_object().end_object();
  w.key("empty_array").begin_array().end_array();
  w.key("list").begin_array().value(1).value("two").begin_object().member("three", 3).end_object();
  w.begin_array().end_array().end_array();
  w.member("strings", std::vector<std::string>{"a", "b"});
  w.member("decimal", keel::Decimal::parse("-12.50"));
  w.member("maybe", std::optional<double>());
  w.end_object();
  b.theirs = Json::object();
  b.theirs["name"] = "Kestrel \"Looms\"\n\ttab\x01\x1f\x7f/";
  b.theirs["count"] = 42;
  b.theirs["negative"] = -7;
  b.theirs["flag"] = true;
  b.theirs["off"] = false;
  b.theirs["nothing"] = nullptr;
  b.theirs["empty_object"] = Json::object();
  b.theirs["empty_array"] = Json::array();
  b.theirs["list"] = Json::array({1, "two", Json{{"three", 3}}, Json::array()});
  b.theirs["strings"] = {"a", "b"};
  b.theirs["decimal"] = "-12.5";
  b.theirs["maybe"] = nullptr;
  return b;
}

std::string one_double(double x) {
  std::string s;
  keel::append_json_number(s, x);
  return s;
}

std::string one_string(std::string_view text) {
  std::string s;
  keel::append_json_string(s, text);
  return s;
}

}  // namespace

TEST_CASE("json: a nested document is laid out as nlohmann lays it out") {
  for (const int indent : {2, 4, 0, -1}) {
    CAPTURE(indent);
    const Both b = sample(indent);
    CHECK(b.mine == b.theirs.dump(indent));
  }
}

TEST_CASE("json: ordinary doubles are written as nlohmann writes them") {
  for (const double x :
       {0.1, 100.0, -2.5, 1e-5, 1.5e20, 123456.789, 0.0001, 0.00012, 1e15, 999999999999999.0, 1e16,
        3e-300, -0.0, 0.0, 1.0 / 3, 2.0 / 3e9, -0.0123456789, 6.02214076e23}) {
    CAPTURE(x);
    CHECK(one_double(x) == Json(x).dump());
  }
  CHECK(one_double(std::nan("")) == "null");
  CHECK(one_double(-HUGE_VAL) == "null");
}

TEST_CASE("json: any double reads back exactly and as nlohmann's text reads back") {
  std::mt19937_64 rng(20240917);
  for (int i = 0; i < 20000; ++i) {
    double x;
    const std::uint64_t bits = rng();
    std::memcpy(&x, &bits, sizeof x);
    if (!std::isfinite(x)) continue;
    const std::string s = one_double(x);
    CAPTURE(s);
    CHECK(std::strtod(s.c_str(), nullptr) == x);
    CHECK(Json::parse(s) == Json::parse(Json(x).dump()));
  }
}

TEST_CASE("json: text that is not UTF-8 gets U+FFFD as nlohmann's replace mode writes it") {
  for (const char* bad : {"\xff", "a\xc3", "\xc3(", "\xe2\x82", "\xe2\x82x", "\xf0\x9f\x98",
                          "\xed\xa0\x80", "\xc0\xaf", "ok \xe2\x82\xac \x80 end"}) {
    CAPTURE(bad);
    CHECK(one_string(bad) ==
          Json(bad).dump(-1, ' ', false, nlohmann::json::error_handler_t::replace));
  }
  // Well-formed text passes through untouched.
  CHECK(one_string("\xe2\x82\xac \xf0\x9f\x98\x80") == "\"\xe2\x82\xac \xf0\x9f\x98\x80\"");
}

TEST_CASE("json: escapes between runs of plain text keep every byte in its place") {
  const std::string text = std::string("plain \"q\" \\ tab\tend\x01 caf\xc3\xa9 ") + '\0' + "tail";
  CHECK(one_string(text) == Json(text).dump());
  CHECK(one_string("") == "\"\"");
  CHECK(one_string("\n") == "\"\\n\"");
  CHECK(one_string("x\xff") == "\"x\xef\xbf\xbd\"");
}

TEST_CASE("json: integers at their limits are written whole") {
  std::string s;
  JsonWriter w(s, -1);
  w.begin_array()
      .value(std::numeric_limits<long long>::min())
      .value(std::numeric_limits<unsigned long long>::max());
  w.value(0).end_array();
  CHECK(s == "[-9223372036854775808,18446744073709551615,0]");
}

TEST_CASE("json: misuse is refused") {
  std::string s;
  JsonWriter w(s);
  w.begin_object();
  CHECK_THROWS_AS(w.value(1), std::logic_error);
  CHECK_THROWS_AS(w.end_array(), std::logic_error);
  w.key("a");
  CHECK_THROWS_AS(w.key("b"), std::logic_error);
  CHECK_THROWS_AS(w.end_object(), std::logic_error);
}
