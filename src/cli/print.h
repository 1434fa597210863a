// How commands show numbers, the same in every command: money with two
// places (half-to-even, Decimal::fixed), a fraction that may be missing as a
// percent with two places or "n/a", and in JSON as a number or null.
#pragma once

#include <fmt/format.h>

#include <nlohmann/json.hpp>
#include <optional>
#include <string>

#include "core/decimal.h"

namespace keel::cli {

inline std::string money(const Decimal& d) {
  return d.fixed(2);
}
inline std::string pct(const std::optional<double>& fraction) {
  return fraction ? fmt::format("{:.2f}%", *fraction * 100) : std::string("n/a");
}
inline nlohmann::ordered_json number(const std::optional<double>& x) {
  return x ? nlohmann::ordered_json(*x) : nlohmann::ordered_json();
}

}  // namespace keel::cli
