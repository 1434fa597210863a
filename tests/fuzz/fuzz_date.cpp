// Fuzz target: ISO 8601 calendar dates.
//
// Invariants: parse() throws only InputError and agrees with the intake's
// iso_date(); a parsed day prints back as the same text; day arithmetic and
// month steps stay consistent; years outside 1..9999 are refused, never
// wrapped.
#include <fuzzer/FuzzedDataProvider.h>

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>

#include "core/date.h"
#include "core/error.h"
#include "fuzz_check.h"
#include "io/fields.h"

using keel::Date;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  FuzzedDataProvider in(data, size);
  const int months = in.ConsumeIntegralInRange<int>(-130000, 130000);
  const int days = in.ConsumeIntegralInRange<int>(-4000000, 4000000);
  const std::string text = in.ConsumeRemainingBytesAsString();

  std::optional<Date> date;
  try {
    date = Date::parse(text);
  } catch (const keel::InputError&) {
  }
  std::string why;
  KEEL_FUZZ_CHECK(keel::io::iso_date(text, why) == date.has_value());
  if (!date) return 0;

  KEEL_FUZZ_CHECK(date->str() == text);
  KEEL_FUZZ_CHECK(Date::parse(date->str()) == *date);
  KEEL_FUZZ_CHECK(Date::from_ymd(date->year(), date->month(), date->day()) == *date);
  KEEL_FUZZ_CHECK(date->month_end() >= *date);
  KEEL_FUZZ_CHECK(date->month_end().month() == date->month());
  KEEL_FUZZ_CHECK(date->plus_days(1) - *date == 1);

  // Stepping by months either lands inside years 1..9999 or is refused.
  try {
    const Date moved = date->plus_months(months);
    KEEL_FUZZ_CHECK(moved.year() >= 1 && moved.year() <= 9999);
    KEEL_FUZZ_CHECK((moved.year() - date->year()) * 12 + (moved.month() - date->month()) == months);
    KEEL_FUZZ_CHECK(moved.day() <= date->day());
  } catch (const keel::InputError&) {
  }
  const Date shifted = date->plus_days(days);
  KEEL_FUZZ_CHECK(shifted - *date == days);
  if (shifted.year() >= 1 && shifted.year() <= 9999)
    KEEL_FUZZ_CHECK(Date::parse(shifted.str()) == shifted);
  return 0;
}
