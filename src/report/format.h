// How reports show numbers, the same in every command: money with two places
// (half-to-even, Decimal::fixed), a fraction as a percent with two places
// ("n/a" when it is missing), a z-score with two places ("0.00", never
// "-0.00").
#pragma once

#include <fmt/format.h>

#include <cmath>
#include <optional>
#include <string>

#include "core/decimal.h"

namespace keel::report {

inline std::string money(const Decimal& d) {
  return d.fixed(2);
}
inline std::string pct(double fraction) {
  return fmt::format("{:.2f}%", fraction * 100);
}
inline std::string pct(const std::optional<double>& fraction) {
  return fraction ? pct(*fraction) : std::string("n/a");
}
// An exact fraction, rounded half-to-even.
inline std::string pct(const Decimal& fraction) {
  return (fraction * Decimal(100)).fixed(2) + "%";
}
inline std::string z_text(const std::optional<double>& z) {
  if (!z) return "";
  return fmt::format("{:.2f}", std::fabs(*z) < 0.005 ? 0.0 : *z);
}

}  // namespace keel::report
