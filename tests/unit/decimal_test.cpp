// Examples of keel::Decimal in use: exact arithmetic, canonical text,
// half-to-even rounding.
#include "core/decimal.h"

#include <doctest/doctest.h>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "core/error.h"

using keel::Decimal;

namespace {
Decimal d(const char* text) {
  return Decimal::parse(text);
}

// Marsaglia's xorshift64 (2003): reproducible pseudo-random test values.
struct Xorshift {
  std::uint64_t seed;
  std::uint64_t operator()() {
    seed ^= seed << 13;
    seed ^= seed >> 7;
    seed ^= seed << 17;
    return seed;
  }
};

// a + b, a - b, a x b and a <=> b against the same numbers moved by `big` (or
// multiplied by it), which takes the general (multi-precision) path.
void check_against_moved(const Decimal& a, const Decimal& b, const Decimal& big) {
  CAPTURE(a.str());
  CAPTURE(b.str());
  REQUIRE(a + b == ((a + big) + b) - big);
  REQUIRE(a - b == ((a + big) - b) - big);
  REQUIRE((a * b) * big == (a * big) * b);
  REQUIRE((a <=> b) == ((a + big) <=> (b + big)));
  REQUIRE((a == b) == ((a + big) == (b + big)));
}
}  // namespace

TEST_CASE("decimal: one tenth plus two tenths is exactly three tenths") {
  CHECK(d("0.1") + d("0.2") == d("0.3"));
  CHECK((d("0.1") + d("0.2")).str() == "0.3");
}

TEST_CASE("decimal: text round-trips without loss") {
  for (const char* text : {"0", "1", "-1", "0.00012345", "123456789012345678901234567890.5",
                           "-0.000000000001", "100", "42.125"}) {
    CHECK(Decimal::parse(text).str() == text);
  }
}

TEST_CASE("decimal: trailing zeros and plus signs are normalized away") {
  CHECK(d("1.2300").str() == "1.23");
  CHECK(d("+5.0").str() == "5");
  CHECK(d("-0.000").str() == "0");
  CHECK(d("000012.5").str() == "12.5");
  CHECK(d(".5").str() == "0.5");
  CHECK(d("5.").str() == "5");
}

TEST_CASE("decimal: exponent notation is read exactly") {
  CHECK(d("1e-12").str() == "0.000000000001");
  CHECK(d("2.5E3").str() == "2500");
  CHECK(d("-1.5e+2").str() == "-150");
}

TEST_CASE("decimal: malformed text is refused with the text in the message") {
  CHECK_THROWS_WITH_AS(Decimal::parse("12,5"),
                       "'12,5' is not a decimal number: unexpected character ','",
                       keel::InputError);
  CHECK_THROWS_WITH_AS(Decimal::parse(""), "'' is not a decimal number: expected digits",
                       keel::InputError);
  CHECK_THROWS_AS(Decimal::parse("abc"), keel::InputError);
  CHECK_THROWS_AS(Decimal::parse("1.2.3"), keel::InputError);
  CHECK_THROWS_AS(Decimal::parse("1e"), keel::InputError);
  CHECK_THROWS_AS(Decimal::parse("-"), keel::InputError);
  CHECK_THROWS_AS(Decimal::parse(" 1"), keel::InputError);
  CHECK_FALSE(Decimal::try_parse("nan").has_value());
}

TEST_CASE("decimal: numbers beyond the supported size are refused, not rounded") {
  CHECK_THROWS_WITH_AS(Decimal::parse("1e-31"),
                       "'1e-31' is not a decimal number: more than 30 digits after the point",
                       keel::InputError);
  CHECK_THROWS_AS(Decimal::parse(std::string(61, '9')), keel::InputError);
  CHECK_NOTHROW(Decimal::parse(std::string(60, '9')));
}

TEST_CASE("decimal: multiplication is exact") {
  CHECK((d("0.00012345") * d("12.5")).str() == "0.001543125");
  CHECK((d("-3") * d("0.5")).str() == "-1.5");
}

TEST_CASE("decimal: rounding is half to even") {
  CHECK(d("2.345").rounded(2).str() == "2.34");
  CHECK(d("2.355").rounded(2).str() == "2.36");
  CHECK(d("2.3451").rounded(2).str() == "2.35");
  CHECK(d("-2.345").rounded(2).str() == "-2.34");
  CHECK(d("0.5").rounded(0).str() == "0");
  CHECK(d("1.5").rounded(0).str() == "2");
  CHECK(d("2.5").rounded(0).str() == "2");
}

TEST_CASE("decimal: fixed shows exactly the asked number of places") {
  CHECK(d("3").fixed(2) == "3.00");
  CHECK(d("0.005").fixed(2) == "0.00");
  CHECK(d("0.015").fixed(2) == "0.02");
  CHECK(d("-0.1").fixed(3) == "-0.100");
  CHECK(d("1234.5678").fixed(0) == "1235");
}

TEST_CASE("decimal: division rounds the exact quotient half to even") {
  CHECK(Decimal::divide(d("1"), d("3"), 4).str() == "0.3333");
  CHECK(Decimal::divide(d("2"), d("3"), 4).str() == "0.6667");
  CHECK(Decimal::divide(d("1"), d("8"), 2).str() == "0.12");  // 0.125 ties to even
  CHECK(Decimal::divide(d("3"), d("8"), 2).str() == "0.38");  // 0.375 ties to even
  CHECK(Decimal::divide(d("-1"), d("8"), 2).str() == "-0.12");
  CHECK(Decimal::divide(d("1.0000001"), d("8"), 2).str() == "0.13");
  CHECK(Decimal::divide(d("10"), d("-4"), 0).str() == "-2");  // -2.5 ties to even
  CHECK_THROWS_AS(Decimal::divide(d("1"), d("0"), 2), keel::InputError);
}

TEST_CASE("decimal: truncation and flooring for whole units") {
  CHECK(d("7.9").truncated(0).str() == "7");
  CHECK(d("-7.9").truncated(0).str() == "-7");
  CHECK(d("-7.9").floored(0).str() == "-8");
  CHECK(d("7.999").floored(2).str() == "7.99");
}

TEST_CASE("decimal: ordering compares values, not text") {
  CHECK(d("0.10") == d("0.1"));
  CHECK(d("2") > d("1.999999"));
  CHECK(d("-1") < d("0"));
  CHECK(d("100") > d("99.5"));
}

TEST_CASE("decimal: conversion to double is for statistics only and correctly rounded") {
  CHECK(d("0.1").to_double() == 0.1);
  CHECK(d("-12.5").to_double() == -12.5);
}

TEST_CASE("decimal: sums and products across the 64-bit boundary stay exact") {
  // 2^63 - 1 = 9223372036854775807 (from memory; checked below by doubling).
  const Decimal max64 = d("9223372036854775807");
  CHECK((max64 + max64).str() == "18446744073709551614");
  CHECK((max64 + d("1")).str() == "9223372036854775808");
  CHECK((-max64 - d("1")).str() == "-9223372036854775808");
  CHECK((-max64 - d("2")).str() == "-9223372036854775809");
  CHECK((d("999999999999999999") * d("999999999999999999")).str() ==
        "999999999999999998000000000000000001");
  CHECK((d("-0.000000000000000001") * d("3000000000000000000")).str() == "-3");
  CHECK((d("92233720368547758.07") + d("0.000000000000000001")).str() ==
        "92233720368547758.070000000000000001");
  CHECK(d("9223372036854775808") > max64);
  CHECK(d("-9223372036854775808") < -max64);
  CHECK(d("1.10") == d("1.1"));
  CHECK(d("0.30") + d("0.70") == d("1"));
}

TEST_CASE("decimal: conversion to double is correctly rounded") {
  CHECK(d("0.1").to_double() == 0.1);
  CHECK(d("-123.456").to_double() == -123.456);
  CHECK(d("9007199254740993").to_double() == 9007199254740992.0);  // 2^53 + 1, ties to even
  CHECK(d("0.0000000000000000000000001").to_double() == 1e-25);
  CHECK(d("12345678901234567890.123").to_double() == 12345678901234567890.123);
}

// Regression (found by fuzz_decimal under UBSan): the machine-word fast path
// multiplied a 19th and 20th digit into a long long before checking the count.
TEST_CASE("decimal: twenty digits parse exactly without overflowing the fast path") {
  CHECK(Decimal::parse("80080000008000080001").str() == "80080000008000080001");
  CHECK(Decimal::parse("-9999999999999999999").str() == "-9999999999999999999");
  CHECK(Decimal::parse("999999999999999999.9").str() == "999999999999999999.9");
}

// The machine-word paths of divide(), rounded() and truncated() against the
// general (multi-precision) path, taken by the same numbers written with
// mantissas beyond 64 bits: a quotient of values scaled by 10^30, and a
// value moved by a whole 10^25 of its own sign (truncation toward zero is
// unchanged by a whole number of the same sign).
TEST_CASE("decimal: machine-word division and rounding agree with the general path") {
  const keel::Decimal big = keel::Decimal::parse("1000000000000000000000000000000");  // 10^30
  std::uint64_t seed = 88172645463325252ULL;
  auto next = [&] {
    seed ^= seed << 13;
    seed ^= seed >> 7;
    seed ^= seed << 17;
    return seed;
  };
  for (int i = 0; i < 5000; ++i) {
    const auto a =
        keel::Decimal::scaled(static_cast<long long>(next() % 2000000000000ULL) - 1000000000000LL,
                              static_cast<int>(next() % 9));
    auto b = keel::Decimal::scaled(static_cast<long long>(next() % 20000000ULL) - 10000000LL,
                                   static_cast<int>(next() % 9));
    if (b.is_zero()) b = keel::Decimal(7);
    const int places = static_cast<int>(next() % 11);
    CAPTURE(a.str());
    CAPTURE(b.str());
    CAPTURE(places);
    REQUIRE(keel::Decimal::divide(a, b, places) == keel::Decimal::divide(a * big, b * big, places));
    REQUIRE(a.rounded(places) == keel::Decimal::divide(a * big, big, places));
    const keel::Decimal shift = keel::Decimal::parse(
        a.is_negative() ? "-10000000000000000000000000" : "10000000000000000000000000");
    REQUIRE(a.truncated(places) == (a + shift).truncated(places) - shift);
  }
}

// A mantissa is kept in a machine word while it fits and in a multi-precision
// integer past it; each value has one form, so values reached either way are equal.
TEST_CASE("decimal: a value that leaves the machine word and comes back equals its small form") {
  const Decimal max64 = d("9223372036854775807");  // 2^63 - 1 (from memory, as above)
  const Decimal back = (max64 + d("1")) - d("1");
  CHECK(back == max64);
  CHECK(back.str() == "9223372036854775807");
  CHECK((back <=> max64) == std::strong_ordering::equal);
  // 10^20 x 10^-20 normalizes to 1, a small mantissa again.
  const Decimal one = d("100000000000000000000") * d("0.00000000000000000001");
  CHECK(one == Decimal(1));
  CHECK(one.scale() == 0);
  CHECK(Decimal::divide(d("18446744073709551614"), d("2"), 0) == max64);
}

TEST_CASE("decimal: the lowest machine integer is exact in every operation") {
  const Decimal lowest(std::numeric_limits<long long>::min());
  CHECK(lowest.str() == "-9223372036854775808");
  CHECK((-lowest).str() == "9223372036854775808");
  CHECK((lowest + Decimal(1)).str() == "-9223372036854775807");
  CHECK((lowest - Decimal(1)).str() == "-9223372036854775809");
  CHECK(Decimal::scaled(std::numeric_limits<long long>::min(), 3).str() == "-9223372036854775.808");
  CHECK(lowest == d("-9223372036854775808"));
}

TEST_CASE("decimal: copies and moves keep values past the machine word") {
  const Decimal big = d("123456789012345678901234567890.5");
  Decimal copy = big;
  CHECK(copy == big);
  Decimal moved = std::move(copy);
  CHECK(moved == big);
  Decimal small = d("2.5");
  small = big;  // a small value takes a big one
  CHECK(small == big);
  small = d("2.5");  // and a big one a small one
  CHECK(small.str() == "2.5");
  std::vector<Decimal> many(100, big);
  many.push_back(d("1"));  // reallocation moves every element
  CHECK(many.front() == big);
  CHECK(many.back() == Decimal(1));
}

// Sums, differences, products and comparisons of two machine-word values are
// done inline when the result fits a word, and by the general (multi-precision)
// path otherwise. The same numbers moved by 10^30 (sums, comparisons) or
// multiplied by it (products) take the general path; both must agree, also
// where the word overflows, the scales differ by more than a word can shift,
// or the result is the lowest machine integer.
TEST_CASE("decimal: inline word arithmetic agrees with the general path") {
  const Decimal big = d("1000000000000000000000000000000");  // 10^30
  Xorshift next{2463534242ULL};
  // Mantissas of every size up to a full word, scales 0 to 24.
  auto any = [&] {
    const int bits = 1 + static_cast<int>(next() % 64);  // a shift of 64 would be undefined
    const auto m = static_cast<long long>(next() >> (64 - bits) >> 1);
    return Decimal::scaled(next() % 2 ? m : -m, static_cast<int>(next() % 25));
  };
  for (int i = 0; i < 2000; ++i) {
    const Decimal a = any(), b = any();
    check_against_moved(a, b, big);
  }
  const Decimal max64 = d("9223372036854775807");  // 2^63 - 1 (from memory, as above)
  CHECK((-max64 - Decimal(1)).str() == "-9223372036854775808");
  CHECK((d("-4611686018427387904") * Decimal(2)).str() == "-9223372036854775808");
  CHECK((max64 + d("0.000000000000000001")).str() == "9223372036854775807.000000000000000001");
  CHECK((d("0.5") + d("0.5")).scale() == 0);
  CHECK((d("1.25") * d("0.8")).str() == "1");
}

TEST_CASE("decimal: a product rounded in 128 bits is the rounded product") {
  Xorshift next{1181783497276652981ULL};
  // Word mantissas of every size, scales 0 to 24, rounded to 0 to 24 places.
  auto any = [&] {
    const int bits = 1 + static_cast<int>(next() % 64);
    const auto m = static_cast<long long>(next() >> (64 - bits) >> 1);
    return Decimal::scaled(next() % 2 ? m : -m, static_cast<int>(next() % 25));
  };
  for (int i = 0; i < 2000; ++i) {
    const Decimal a = any(), b = any();
    const int places = static_cast<int>(next() % 25);
    CAPTURE(a.str());
    CAPTURE(b.str());
    CAPTURE(places);
    CHECK(Decimal::times_rounded(a, b, places).str() == (a * b).rounded(places).str());
  }
  // Ties go to the even neighbour (values worked by hand).
  CHECK(Decimal::times_rounded(d("0.25"), d("0.1"), 2).str() == "0.02");
  CHECK(Decimal::times_rounded(d("0.35"), d("0.1"), 2).str() == "0.04");
  CHECK(Decimal::times_rounded(d("-0.25"), d("0.1"), 2).str() == "-0.02");
}

// Mantissas past a machine word but below 2^127 are worked on in 128 bits.
// The same numbers moved by 10^45 (sums, comparisons, truncation) or
// multiplied by it (products, quotients, rounding) take the general
// (multi-precision) path; both must agree, up to and across 2^127.
TEST_CASE("decimal: 128-bit arithmetic agrees with the general path") {
  const Decimal big = Decimal::parse("1" + std::string(45, '0'));  // 10^45
  Xorshift next{88172645463325252ULL};
  // 1 to 39 digits, 0 to 30 of them after the point, either sign.
  auto any = [&] {
    std::string digits(1 + next() % 39, '0');
    for (auto& c : digits) c = static_cast<char>('0' + next() % 10);
    const std::size_t point = next() % std::min<std::size_t>(digits.size(), 31);
    if (point > 0) digits.insert(digits.size() - point, ".");
    return Decimal::parse((next() % 2 ? "-" : "") + digits);
  };
  for (int i = 0; i < 1000; ++i) {
    const Decimal a = any(), b = any();
    check_against_moved(a, b, big);
    const int places = static_cast<int>(next() % 20);
    CAPTURE(a.str());
    CAPTURE(b.str());
    CAPTURE(places);
    REQUIRE(a.rounded(places) == Decimal::divide(a * big, big, places));
    const Decimal shift = a.is_negative() ? -big : big;
    REQUIRE(a.truncated(places) == (a + shift).truncated(places) - shift);
    if (!b.is_zero())
      REQUIRE(Decimal::divide(a, b, places) == Decimal::divide(a * big, b * big, places));
  }
  // 2^127 - 1, 2^127 and 2^126, and the square below, computed with Python's
  // exact integers (python3 -c 'print(2**127)').
  const Decimal top = d("170141183460469231731687303715884105727");
  const Decimal over = d("170141183460469231731687303715884105728");
  CHECK(over == d("85070591730234615865843651857942052864") * Decimal(2));
  CHECK((top + Decimal(1)) == over);
  CHECK((-top - Decimal(1)).str() == "-170141183460469231731687303715884105728");
  CHECK((top - over).str() == "-1");
  CHECK(top < over);
  CHECK((d("13043817825332782212") * d("13043817825332782212")).str() ==
        "170141183460469231722567801800623612944");  // just below 2^127
  CHECK(Decimal::divide(top, d("0.5"), 0) == top * Decimal(2));
  CHECK(d("12345678901234567890123.456789").rounded(2).str() == "12345678901234567890123.46");
}

TEST_CASE("decimal: of_double gives the decimal fmt prints, exact ties to even") {
  // Ties: 2^-11 = 0.00048828125 has eleven places, so ten places is a tie.
  CHECK(Decimal::of_double(0.00048828125, 10) == d("0.0004882812"));
  CHECK(Decimal::of_double(100000.00048828125, 10) == d("100000.0004882812"));
  CHECK(Decimal::of_double(0.00146484375, 10) == d("0.0014648438"));
  CHECK(Decimal::of_double(-0.00048828125, 10) == d("-0.0004882812"));
  CHECK(Decimal::of_double(2.5, 0) == d("2"));
  CHECK(Decimal::of_double(3.5, 0) == d("4"));
  CHECK(Decimal::of_double(0.1, 10) == d("0.1"));
  CHECK(Decimal::of_double(-1e-12, 10).is_zero());
  CHECK(Decimal::of_double(2626523971089.2812, 10) == d("2626523971089.28125"));
  CHECK(Decimal::of_double(1e30, 10) == d("1000000000000000019884624838656"));
  CHECK_THROWS_AS(Decimal::of_double(std::numeric_limits<double>::infinity(), 10),
                  keel::InputError);
  // Against fmt's own text over many magnitudes (a linear congruential walk).
  std::uint64_t state = 12345;
  for (int i = 0; i < 20000; ++i) {
    state = state * 6364136223846793005ULL + 1442695040888963407ULL;
    const double x =
        std::ldexp(static_cast<double>(state >> 11), static_cast<int>(state % 90) - 90);
    const int places = static_cast<int>(state % 19);
    const double y = i % 2 ? -x : x;
    REQUIRE_MESSAGE(Decimal::of_double(y, places) == d(fmt::format("{:.{}f}", y, places).c_str()),
                    fmt::format("{:.17g} at {} places", y, places));
  }
}

// The edges of the fast paths: +-(2^63 - 1) and +-2^63 (the machine word),
// +-(2^127 - 1) and +-2^127 (128 bits), and kMaxDigits nines, each at scales
// 0 and 30. Every pair goes through +, -, *, comparison, rounding,
// division, truncation and a rounded product, and must give what the same
// numbers moved by 10^45 (or multiplied by it) give on the multi-precision path.
TEST_CASE(
    "decimal: every operation at the word and 128-bit edges agrees with the multi-precision path") {
  const Decimal big = Decimal::parse("1" + std::string(45, '0'));  // 10^45
  // Powers of two from Python's exact integers (python3 -c 'print(2**63, 2**127)').
  const std::vector<std::string> mantissas = {
      "9223372036854775807", "9223372036854775808", "170141183460469231731687303715884105727",
      "170141183460469231731687303715884105728", std::string(Decimal::kMaxDigits, '9')};
  std::vector<Decimal> edges;
  for (const auto& m : mantissas)
    for (const int scale : {0, 30})
      for (const char* sign : {"", "-"}) {
        std::string digits = m;
        if (digits.size() <= static_cast<std::size_t>(scale))
          digits.insert(0, static_cast<std::size_t>(scale) + 1 - digits.size(), '0');
        if (scale > 0) digits.insert(digits.size() - static_cast<std::size_t>(scale), ".");
        const std::string text = sign + digits;
        const Decimal value = Decimal::parse(text);
        REQUIRE(value.str() == text);
        edges.push_back(value);
      }
  for (const Decimal& a : edges)
    for (const Decimal& b : edges) {
      check_against_moved(a, b, big);
      for (const int places : {0, 18}) {
        CAPTURE(places);
        REQUIRE(a.rounded(places) == Decimal::divide(a * big, big, places));
        REQUIRE(Decimal::divide(a, b, places) == Decimal::divide(a * big, b * big, places));
        REQUIRE(Decimal::times_rounded(a, b, places) == (a * b).rounded(places));
        const Decimal shift = a.is_negative() ? -big : big;
        REQUIRE(a.truncated(places) == (a + shift).truncated(places) - shift);
      }
    }
}

// Mantissas of 60 to 128 bits, either sign, scales 0 to 30: values on
// either side of 2^63 and 2^127 against the multi-precision path, as above.
TEST_CASE("decimal: random values around 2^63 and 2^127 agree with the multi-precision path") {
  const Decimal big = Decimal::parse("1" + std::string(45, '0'));  // 10^45
  const Decimal two64 = d("18446744073709551616");                 // 2^64 (python3: 2**64)
  Xorshift next{0x9E3779B97F4A7C15ULL};
  auto any = [&] {
    const int bits = 60 + static_cast<int>(next() % 69);  // 60 .. 128
    const std::uint64_t high = bits > 64 ? next() >> (128 - bits) : 0;
    const std::uint64_t low = bits >= 64 ? next() : next() >> (64 - bits);
    // high x 2^64 + low, built from two halves below 2^63 so each fits a word.
    const Decimal h = Decimal(static_cast<long long>(high >> 1)) * Decimal(2) +
                      Decimal(static_cast<long long>(high & 1));
    const Decimal l = Decimal(static_cast<long long>(low >> 1)) * Decimal(2) +
                      Decimal(static_cast<long long>(low & 1));
    const Decimal m = (h * two64 + l) * Decimal::scaled(1, static_cast<int>(next() % 31));
    return next() % 2 ? -m : m;
  };
  for (int i = 0; i < 500; ++i) {
    const Decimal a = any(), b = any();
    check_against_moved(a, b, big);
    const int places = static_cast<int>(next() % 25);
    CAPTURE(places);
    REQUIRE(Decimal::parse(a.str()) == a);
    REQUIRE(a.rounded(places) == Decimal::divide(a * big, big, places));
    REQUIRE(Decimal::times_rounded(a, b, places) == (a * b).rounded(places));
    if (!b.is_zero())
      REQUIRE(Decimal::divide(a, b, places) == Decimal::divide(a * big, b * big, places));
  }
}

// Results computed with Python's decimal module (python3, getcontext().prec =
// 400, quantize(..., rounding=ROUND_HALF_EVEN) for rounding), from the same
// operands; the expression is beside each line.
TEST_CASE("decimal: results at the word and 128-bit edges match Python's decimal module") {
  const Decimal max64 = d("9223372036854775807");                       // 2**63 - 1
  const Decimal two63 = d("9223372036854775808");                       // 2**63
  const Decimal max127 = d("170141183460469231731687303715884105727");  // 2**127 - 1
  const Decimal two127 = d("170141183460469231731687303715884105728");  // 2**127
  CHECK((max64 + Decimal(1)).str() == "9223372036854775808");
  CHECK((-two63 - Decimal(1)).str() == "-9223372036854775809");
  CHECK((max127 + Decimal(1)).str() == "170141183460469231731687303715884105728");
  CHECK((-max127 - Decimal(1)).str() == "-170141183460469231731687303715884105728");
  CHECK((max127 + max127).str() == "340282366920938463463374607431768211454");
  CHECK((-max127 - two127).str() == "-340282366920938463463374607431768211455");
  CHECK((two63 - max64).str() == "1");
  CHECK((max64 * max64).str() == "85070591730234615847396907784232501249");
  CHECK((two63 * two63).str() == "85070591730234615865843651857942052864");
  CHECK((d("18446744073709551616") * two63).str() == "170141183460469231731687303715884105728");
  CHECK((max127 * max127).str() ==
        "28948022309329048855892746252171976962977213799489202546401021394546514198529");
  CHECK((-two63 * d("0.000000000001")).str() == "-9223372.036854775808");
  CHECK((d("460000000000") * d("1.234567890123")).str() == "567901229456.58");
  const Decimal max127_30 = d("170141183.460469231731687303715884105727");  // (2**127 - 1) / 10**30
  const Decimal two127_30 = d("170141183.460469231731687303715884105728");  // 2**127 / 10**30
  const Decimal two63_12 = d("9223372.036854775808");                       // 2**63 / 10**12
  CHECK(max127_30.rounded(2).str() == "170141183.46");
  CHECK((-max127_30).rounded(0).str() == "-170141183");
  CHECK(two127_30.rounded(5).str() == "170141183.46047");
  CHECK(two63_12.rounded(11).str() == "9223372.03685477581");
  CHECK(Decimal::divide(max127, Decimal(3), 10).str() ==
        "56713727820156410577229101238628035242.3333333333");
  CHECK(Decimal::divide(-two127, d("0.7"), 3).str() ==
        "-243058833514956045330981862451263008182.857");
  CHECK(Decimal::divide(two63, max64, 30).str() == "1.000000000000000000108420217249");
  CHECK(Decimal::times_rounded(two63_12, two63_12, 6).str() == "85070591730234.615866");
  CHECK(
      Decimal::times_rounded(d("1701411834604692317.31687303715884105727"), d("-1.5"), 19).str() ==
      "-2552117751907038475.9753095557382615859");
  // Ordering across the edges.
  CHECK(max64 < two63);
  CHECK(-two63 < -max64);
  CHECK(max127 < two127);
  CHECK(-two127 < -max127);
  CHECK((two127 - Decimal(1)) == max127);
  CHECK((-two127 + Decimal(1)) == -max127);
}

TEST_CASE("decimal: copies and moves keep values past 2^127") {
  const Decimal huge = d("-1701411834604692317316873037158841057280.5");  // below -2^127 x 10
  const Decimal wide = d("-17014118346046923173168730371588410.5727");
  Decimal copy = huge;
  CHECK(copy == huge);
  copy = wide;  // the heap form takes an inline one
  CHECK(copy == wide);
  copy = huge;  // and an inline one a heap form
  CHECK(copy.str() == "-1701411834604692317316873037158841057280.5");
  Decimal moved = std::move(copy);
  CHECK(moved == huge);
  std::vector<Decimal> many(50, huge);
  many.insert(many.begin(), wide);  // moves every element
  CHECK(many.front() == wide);
  CHECK(many.back() == huge);
  CHECK((huge - huge).is_zero());
  CHECK((wide - wide).is_zero());
}

// Trailing zeros are found with a multiplication by the inverse of 5
// instead of a division by 10, in 64 bits and in 128. The expected text is
// the mantissa's digits with the point put in and the zeros after it cut,
// written out here by string work alone.
TEST_CASE("decimal: trailing zeros are stripped by the multiple-of-ten test in 64 and 128 bits") {
  CHECK((d("1.25") * d("0.8")).str() == "1");
  CHECK((d("1.25") * d("0.8")).scale() == 0);
  CHECK(Decimal::scaled(1000000000000000000LL, 18) == Decimal(1));
  CHECK(Decimal::scaled(-5000, 3).str() == "-5");
  CHECK(Decimal::scaled(-5010, 3).str() == "-5.01");
  CHECK(Decimal::scaled(5, 0).str() == "5");
  CHECK(Decimal::scaled(0, 7).scale() == 0);
  // Even mantissas without a factor of five keep every digit.
  CHECK(Decimal::scaled(1024, 3).str() == "1.024");
  CHECK(Decimal::scaled(-6, 1).str() == "-0.6");
  // Past a machine word (2^64 = 18446744073709551616, python3 -c 'print(2**64)'):
  // 2^64 x 5 has one zero to drop and stays past the word; 10^19 has nineteen.
  CHECK((d("18446744073709551616") * d("0.00000000000000000005")).str() == "0.9223372036854775808");
  CHECK((d("-10000000000000000000") * d("0.0000000000000000001")).str() == "-1");
  CHECK((d("-1000000000000000000000") * d("0.000000000000000000000000000001")).str() ==
        "-0.000000001");
  Xorshift next{0x2545F4914F6CDD1DULL};
  for (int i = 0; i < 3000; ++i) {
    // Digits, then 0 to 20 zeros, at a scale of 0 to 30.
    std::string digits(1 + next() % 19, '0');
    for (auto& c : digits) c = static_cast<char>('1' + next() % 9);
    digits.append(next() % 21, '0');
    const int scale = static_cast<int>(next() % 31);
    const bool negative = next() % 2 != 0;
    std::string expected = digits;
    if (expected.size() <= static_cast<std::size_t>(scale))
      expected.insert(0, static_cast<std::size_t>(scale) + 1 - expected.size(), '0');
    if (scale > 0) {
      expected.insert(expected.size() - static_cast<std::size_t>(scale), ".");
      while (expected.back() == '0') expected.pop_back();
      if (expected.back() == '.') expected.pop_back();
    }
    if (negative) expected.insert(0, "-");
    // The same digits reached by a product that must be normalized.
    const Decimal whole = Decimal::parse((negative ? "-" : "") + digits);
    CAPTURE(expected);
    REQUIRE((whole * Decimal::scaled(1, scale)).str() == expected);
  }
}

// Two machine-word values whose scales are too far apart to align in a word
// are ordered by the sign of the one at the smaller scale, unless it is zero.
TEST_CASE("decimal: word values too far apart in scale to align are ordered by sign") {
  const Decimal tiny = Decimal::scaled(1, 25);  // 10^-25
  CHECK(Decimal(0) < tiny);
  CHECK(-tiny < Decimal(0));
  CHECK(Decimal(5) > tiny);
  CHECK(Decimal(-5) < tiny);
  CHECK(tiny < Decimal(5));
  CHECK(Decimal::scaled(-999999999, 20) > Decimal(-1));
  // A shift that overflows the word: 922337203685477581 x 10 > 2^63 - 1.
  CHECK(d("922337203685477581") > d("1.5"));
  CHECK(d("-922337203685477581") < d("-1.5"));
  CHECK(d("1.5") < d("922337203685477581"));
  CHECK(d("922337203685477580") > d("922337203685477579.9"));  // still shifts
  const Decimal big = d("1000000000000000000000000000000");    // 10^30: the general path
  for (const Decimal& a :
       {Decimal(0), Decimal(7), Decimal(-7), d("922337203685477581"), d("-922337203685477581")})
    for (const Decimal& b : {tiny, -tiny, Decimal::scaled(123456789, 19), d("1.5"), d("-1.5")}) {
      CAPTURE(a.str());
      CAPTURE(b.str());
      CHECK((a <=> b) == ((a + big) <=> (b + big)));
      CHECK((b <=> a) == ((b + big) <=> (a + big)));
    }
}

// rounded(), floored(), divide() and times_rounded() work in machine words
// when everything fits one, and fall back to 128 bits (one divq when the
// quotient fits a word, a library division otherwise) when it does not.
// Expected values from Python's decimal module (prec 400, ROUND_HALF_EVEN).
TEST_CASE("decimal: word rounding, flooring and division fall back to 128 bits where they must") {
  // Flooring: one division, one lower for a negative remainder.
  CHECK(d("-7.91").floored(1).str() == "-8");
  CHECK(d("-7.9").floored(1).str() == "-7.9");
  CHECK(d("-0.001").floored(2).str() == "-0.01");
  CHECK(d("0.019").floored(2).str() == "0.01");
  CHECK(d("-12.5").floored(0).str() == "-13");
  CHECK(d("-0.5").floored(30).str() == "-0.5");
  // Ties to even in a word and past it.
  CHECK(d("0.125").rounded(2).str() == "0.12");
  CHECK(d("-0.135").rounded(2).str() == "-0.14");
  // 922337203685477580.7 x 10 overflows a word: the quotient is taken in 128 bits.
  CHECK(Decimal::divide(d("922337203685477580.7"), d("0.3"), 1).str() == "3074457345618258602.3");
  CHECK(Decimal::divide(d("1"), d("3"), 18).str() == "0.333333333333333333");
  CHECK(Decimal::divide(d("-2"), d("3"), 18).str() == "-0.666666666666666667");
  // A numerator past 2^64 x the divisor: the quotient needs more than a word.
  CHECK(Decimal::divide(d("170141183460469231731687303715884105727"), d("2"), 0).str() ==
        "85070591730234615865843651857942052864");  // (2^127 - 1) / 2 = 2^126 - 0.5, to even
  // A divisor past 2^64 (18446744073709551617 = 2^64 + 1).
  CHECK(Decimal::divide(d("36893488147419103234"), d("18446744073709551617"), 3).str() == "2");
  CHECK(Decimal::divide(d("-27670116110564327425.5"), d("18446744073709551617"), 1).str() ==
        "-1.5");
  // A product that fits a word, and one that does not (rounded in 128 bits).
  CHECK(Decimal::times_rounded(d("1.005"), d("0.5"), 3).str() == "0.502");
  CHECK(Decimal::times_rounded(d("3037000499.97605"), d("3037000499.97605"), 2).str() ==
        "9223372036854777676.05");
}
