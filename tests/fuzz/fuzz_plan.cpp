// Fuzz target: TOML plan files (rules/plan.h).
//
// Invariants: parse_plan() either gives a plan or throws InputError whose
// message starts with the plan file's name, or with the path of the rule file
// a part names (a missing or malformed rule file is reported by the rule
// reader); nothing else escapes.
// A plan it gives keeps its promises: unique part names, every account in
// one pool only, each shared pool's shares adding up to one, every part in a
// pool that exists, and a gain cap of zero or more in whole cents.

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <set>
#include <string>

#include "core/error.h"
#include "fuzz_check.h"
#include "rules/plan.h"

namespace {

// A folder holding the one rule file the seed plans name (value.toml). One
// fixed name, so runs (libFuzzer ends without running destructors) leave at
// most this one small folder behind; every run writes the same file.
struct RuleFolder {
  std::filesystem::path path = std::filesystem::temp_directory_path() / "keel-fuzz-plan";
  RuleFolder() {
    std::filesystem::create_directories(path);
    std::ofstream(path / "value.toml") << "name = \"value\"\n[scope]\naccounts = [\"Taxable\"]\n"
                                          "[select]\nby = \"count\"\ncount = 2\n";
  }
};

const std::filesystem::path& folder() {
  static const RuleFolder dir;
  return dir.path;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string toml(reinterpret_cast<const char*>(data), size);
  // A rule path may name any file; reading a device (an endless /dev/zero)
  // would test the machine, not the plan reader.
  for (const char* device : {"/dev", "/proc", "/sys"})
    if (toml.find(device) != std::string::npos) return 0;
  const auto& dir = folder();
  try {
    const auto plan = keel::rules::parse_plan(toml, "fuzz-plan.toml", dir);
    std::set<std::string> names, accounts;
    for (const auto& part : plan.parts) {
      KEEL_FUZZ_CHECK(names.insert(part.name).second);
      KEEL_FUZZ_CHECK(part.pool < plan.pools.size());
      KEEL_FUZZ_CHECK(part.share.is_positive() && part.share <= keel::Decimal(1));
    }
    for (std::size_t i = 0; i < plan.pools.size(); ++i) {
      for (const auto& a : plan.pools[i].accounts) KEEL_FUZZ_CHECK(accounts.insert(a).second);
      if (plan.pools[i].own) continue;
      keel::Decimal total;
      for (const auto& part : plan.parts)
        if (part.pool == i) total += part.share;
      // Shares are percentages divided by 100 to 12 places: one, within that rounding.
      KEEL_FUZZ_CHECK((total - keel::Decimal(1)).abs() <=
                      keel::Decimal::parse("0.000000000001") *
                          keel::Decimal(static_cast<std::int64_t>(plan.parts.size())));
    }
    if (plan.tax.gain_cap) {
      KEEL_FUZZ_CHECK(!plan.tax.gain_cap->is_negative());
      KEEL_FUZZ_CHECK(plan.tax.gain_cap->rounded(2) == *plan.tax.gain_cap);
    }
  } catch (const keel::InputError& e) {
    // The plan file's name, or the rule file's path: in the folder, or absolute.
    const std::string what = e.what();
    KEEL_FUZZ_CHECK(what.rfind("fuzz-plan.toml", 0) == 0 || what.rfind(dir.string(), 0) == 0 ||
                    what.rfind('/', 0) == 0);
  }
  return 0;
}
