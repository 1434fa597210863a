// Text safety: invisible characters in names, and ill-formed UTF-8 made safe.
#include "core/text.h"

#include <doctest/doctest.h>

#include "core/error.h"
#include "ledger_fixture.h"

using namespace keel;
using namespace keel::testing;

TEST_CASE(
    "regression: ZQ, ZQ<U+200B> and ZQ<U+202E> were three securities that all printed as ZQ") {
  LedgerFixture f;
  f.security("ZQ");
  const std::string before = f.dump();
  CHECK_THROWS_WITH_AS(
      f.security("ZQ\xE2\x80\x8B"),
      "symbol 'ZQ<U+200B>' contains U+200B ZERO WIDTH SPACE, an invisible "
      "character; names may not contain invisible or direction-changing characters",
      InputError);
  CHECK_THROWS_WITH_AS(
      f.security("ZQ\xE2\x80\xAE"),
      "symbol 'ZQ<U+202E>' contains U+202E RIGHT-TO-LEFT OVERRIDE, an invisible "
      "character; names may not contain invisible or direction-changing characters",
      InputError);
  CHECK(f.dump() == before);
}

TEST_CASE("identifiers: bidirectional, zero-width and other invisible characters are refused") {
  // A code point from each group: Cf format characters (soft hyphen, Arabic
  // letter mark, zero-width joiner, left-to-right isolate, word joiner, byte
  // order mark, a tag), a variation selector and a Hangul filler (Default
  // Ignorable but not Cf), and the line and paragraph separators.
  const char* cases[][2] = {
      {"\xC2\xAD", "U+00AD SOFT HYPHEN"},
      {"\xD8\x9C", "U+061C ARABIC LETTER MARK"},
      {"\xE2\x80\x8D", "U+200D ZERO WIDTH JOINER"},
      {"\xE2\x81\xA6", "U+2066 LEFT-TO-RIGHT ISOLATE"},
      {"\xE2\x81\xA0", "U+2060 WORD JOINER"},
      {"\xEF\xBB\xBF", "U+FEFF ZERO WIDTH NO-BREAK SPACE"},
      {"\xF3\xA0\x80\x81", "U+E0001 LANGUAGE TAG"},
      {"\xEF\xB8\x8F", "U+FE0F VARIATION SELECTOR-16"},
      {"\xE3\x85\xA4", "U+3164 HANGUL FILLER"},
      {"\xE2\x80\xA8", "U+2028 LINE SEPARATOR"},
      {"\xE2\x80\xA9", "U+2029 PARAGRAPH SEPARATOR"},
  };
  for (const auto& c : cases) {
    const char* bytes = c[0];
    const char* name = c[1];
    CAPTURE(name);
    const std::string value = std::string("Main") + bytes + "Account";
    CHECK(invisible_code_point(value) == std::optional<std::string>(name));
    CHECK_THROWS_AS(check_identifier("account name", value, 200), InputError);
  }
}

TEST_CASE("identifiers: letters, marks and spaces inside a name are accepted") {
  for (const char* ok : {"Ωμέγα Fund", "caf\xC3\xA9", "cafe\xCC\x81", "\xE5\xB9\xB3\xE5\xAE\x89",
                         "Z\xC2\xA0Q", "O'Neil \"Quoted\""}) {
    CAPTURE(ok);
    CHECK_NOTHROW(check_identifier("name", ok, 200));
    CHECK_FALSE(invisible_code_point(ok).has_value());
  }
}

TEST_CASE("identifiers: white space at either end is refused, naming the character") {
  CHECK_THROWS_WITH_AS(check_identifier("symbol", "ZQ ", 40),
                       "symbol 'ZQ ' ends with white space (U+0020 SPACE); names may not start or "
                       "end with it",
                       InputError);
  CHECK_THROWS_WITH_AS(check_identifier("account name", "\xE3\x80\x80Main", 200),
                       "account name '\xE3\x80\x80Main' starts with white space (U+3000 "
                       "IDEOGRAPHIC SPACE); names may not start or end with it",
                       InputError);
}

TEST_CASE("notes: free text may hold a zero-width joiner, as some scripts and emoji need") {
  CHECK_NOTHROW(check_name("note", "\xE2\x80\x8D", 4000));
}

TEST_CASE("utf-8: ill-formed sequences become U+FFFD, one per maximal subpart") {
  // The Unicode Standard, chapter 3, "U+FFFD Substitution of Maximal Subparts"
  // (Table 3-8 example, from memory): 61 F1 80 80 E1 80 C2 62 80 63 80 BF 64
  // becomes a, FFFD, FFFD, FFFD, b, FFFD, c, FFFD, FFFD, d.
  const std::string bad = "\x61\xF1\x80\x80\xE1\x80\xC2\x62\x80\x63\x80\xBF\x64";
  const std::string r = "\xEF\xBF\xBD";
  CHECK(to_valid_utf8(bad) == "a" + r + r + r + "b" + r + "c" + r + r + "d");
  CHECK(to_valid_utf8("caf\xC3\xA9") == "caf\xC3\xA9");
  CHECK(valid_utf8(to_valid_utf8("\xC0\xAF\xED\xA0\x80\xF4\x90\x80\x80")));
}
