// Fuzz target: Decimal text parsing and arithmetic.
//
// Invariants: parse() throws only InputError, exactly when try_parse() gives
// nothing, and agrees with the intake's canonical_decimal(); the canonical
// text reads back to the same value; + - * and divide() satisfy the usual
// identities exactly; rounding moves a value by at most half a unit of the
// last kept place, and fixed() prints the rounded value.
#include <fuzzer/FuzzedDataProvider.h>

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>

#include "core/decimal.h"
#include "core/error.h"
#include "fuzz_check.h"
#include "io/fields.h"

using keel::Decimal;

namespace {

std::optional<Decimal> read(const std::string& text) {
  const auto quiet = Decimal::try_parse(text);
  std::optional<Decimal> loud;
  try {
    loud = Decimal::parse(text);
  } catch (const keel::InputError& e) {
    KEEL_FUZZ_CHECK(std::string(e.what()).find("is not a decimal number") != std::string::npos);
  }
  KEEL_FUZZ_CHECK(quiet.has_value() == loud.has_value());
  if (quiet) KEEL_FUZZ_CHECK(*quiet == *loud);

  std::string canonical, why;
  const bool intake_ok = keel::io::canonical_decimal(text, canonical, why);
  KEEL_FUZZ_CHECK(intake_ok == quiet.has_value());
  if (quiet) {
    KEEL_FUZZ_CHECK(canonical == quiet->str());
    // Canonical text is lossless and stable.
    const Decimal back = Decimal::parse(quiet->str());
    KEEL_FUZZ_CHECK(back == *quiet);
    KEEL_FUZZ_CHECK(back.str() == quiet->str());
  } else {
    KEEL_FUZZ_CHECK(!why.empty());
  }
  return quiet;
}

Decimal unit(int places) {  // 10^-places
  return Decimal::parse("1e-" + std::to_string(places));
}

Decimal half_unit(int places) {  // 0.5 * 10^-places, which may lie past kMaxScale
  return Decimal::parse("0.5") * unit(places);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  FuzzedDataProvider in(data, size);
  const int places = in.ConsumeIntegralInRange<int>(0, Decimal::kMaxScale);
  const std::string text_a = in.ConsumeRandomLengthString(200);
  const std::string text_b = in.ConsumeRemainingBytesAsString();
  const auto a = read(text_a);
  const auto b = read(text_b);
  if (!a) return 0;

  const Decimal zero;
  const Decimal one(1);
  KEEL_FUZZ_CHECK(*a - *a == zero);
  KEEL_FUZZ_CHECK(*a + zero == *a);
  KEEL_FUZZ_CHECK(*a * one == *a);
  KEEL_FUZZ_CHECK(-(-*a) == *a);
  KEEL_FUZZ_CHECK(a->abs().sign() >= 0);

  const Decimal r = a->rounded(places);
  KEEL_FUZZ_CHECK(r.scale() <= places);
  KEEL_FUZZ_CHECK((*a - r).abs() <= half_unit(places));
  KEEL_FUZZ_CHECK(Decimal::parse(a->fixed(places)) == r);
  const Decimal t = a->truncated(places);
  KEEL_FUZZ_CHECK(t.abs() <= a->abs());
  KEEL_FUZZ_CHECK((*a - t).abs() < unit(places));
  const Decimal f = a->floored(places);
  KEEL_FUZZ_CHECK(f <= *a);
  KEEL_FUZZ_CHECK(*a - f < unit(places));

  if (!b) return 0;
  KEEL_FUZZ_CHECK(*a + *b == *b + *a);
  KEEL_FUZZ_CHECK(*a * *b == *b * *a);
  KEEL_FUZZ_CHECK(*a + *b - *b == *a);
  KEEL_FUZZ_CHECK((*a <=> *b) == (zero <=> (*b - *a)));
  KEEL_FUZZ_CHECK((*a == *b) == (a->str() == b->str()));
  KEEL_FUZZ_CHECK((*a + *b) * *b == *a * *b + *b * *b);
  if (!b->is_zero()) {
    // a*b/b is exactly a, so dividing at a's own scale loses nothing.
    KEEL_FUZZ_CHECK(Decimal::divide(*a * *b, *b, a->scale()) == *a);
    const Decimal q = Decimal::divide(*a, *b, places);
    KEEL_FUZZ_CHECK(q.scale() <= places);
    // |a/b - q| <= half a unit: |a - q*b| <= half_unit * |b|.
    KEEL_FUZZ_CHECK((*a - q * *b).abs() <= half_unit(places) * b->abs());
  } else {
    bool threw = false;
    try {
      (void)Decimal::divide(*a, *b, places);
    } catch (const keel::InputError&) {
      threw = true;
    }
    KEEL_FUZZ_CHECK(threw);
  }
  return 0;
}
