// Fuzz target: TOML mapping files.
//
// Invariants: Mapping::parse() either gives a mapping or throws InputError
// whose message starts with the mapping's name; a parsed mapping's date
// format and number settings can be applied to any text without crashing, and
// a date they accept is a real calendar day.
#include <fuzzer/FuzzedDataProvider.h>

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <string>

#include "core/date.h"
#include "core/error.h"
#include "fuzz_check.h"
#include "io/fields.h"
#include "io/mapping.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  FuzzedDataProvider in(data, size);
  const std::string cell = in.ConsumeRandomLengthString(64);
  const std::string toml = in.ConsumeRemainingBytesAsString();
  keel::io::Mapping mapping;
  try {
    mapping = keel::io::Mapping::parse(toml, "fuzz.toml");
  } catch (const keel::InputError& e) {
    KEEL_FUZZ_CHECK(std::string(e.what()).rfind("fuzz.toml:", 0) == 0);
    return 0;
  }
  KEEL_FUZZ_CHECK(mapping.source == "fuzz.toml");
  KEEL_FUZZ_CHECK(mapping.decimal_mark == '.' || mapping.decimal_mark == ',');
  std::string out, why;
  if (mapping.date_format.to_iso(cell, out, why)) {
    try {
      (void)keel::Date::parse(out);
    } catch (const keel::InputError&) {
      KEEL_FUZZ_CHECK(false && "date format accepted a day that is not a calendar date");
    }
  } else {
    KEEL_FUZZ_CHECK(!why.empty());
  }
  out.clear();
  why.clear();
  if (keel::io::normalize_number(cell, mapping.decimal_mark, mapping.thousands, out, why)) {
    // The separator is dropped; only '.' (the mark written out) may remain.
    if (mapping.thousands != 0 && mapping.thousands != '.')
      KEEL_FUZZ_CHECK(out.find(mapping.thousands) == std::string::npos);
    // Every '.' written out stands for a decimal mark of the cell.
    KEEL_FUZZ_CHECK(std::count(out.begin(), out.end(), '.') ==
                    std::count(cell.begin(), cell.end(), mapping.decimal_mark));
  } else {
    KEEL_FUZZ_CHECK(!why.empty());
  }
  return 0;
}
