// Fuzz target: TOML rule files.
//
// Invariant: parse_rule() either gives a rule or throws InputError whose
// message starts with the rule file's name (every error names the file, and
// the line and key where toml++ knows them); nothing else escapes.
#include <cstddef>
#include <cstdint>
#include <string>

#include "core/error.h"
#include "fuzz_check.h"
#include "rules/rule.h"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string toml(reinterpret_cast<const char*>(data), size);
  try {
    (void)keel::rules::parse_rule(toml, "fuzz-rule.toml");
  } catch (const keel::InputError& e) {
    KEEL_FUZZ_CHECK(std::string(e.what()).rfind("fuzz-rule.toml", 0) == 0);
  }
  return 0;
}
