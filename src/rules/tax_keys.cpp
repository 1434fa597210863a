#include "rules/tax_keys.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace keel::rules {
namespace {

// A number exactly as written (TOML integer or float).
Decimal exact_number(const toml::node& n, const TaxFail& fail, std::string_view what) {
  if (n.is_integer()) return Decimal(*n.value<std::int64_t>());
  if (n.is_floating_point() && std::isfinite(*n.value<double>())) {
    const auto text = fmt::format("{}", *n.value<double>());  // shortest text that reads back
    if (const auto v = Decimal::try_parse(text)) return *v;
    fail(n, fmt::format("{} is out of range for an exact decimal", text));
  }
  fail(n, fmt::format("must be {}", what));
  throw std::logic_error("TaxFail returned");
}

}  // namespace

bool read_deferred_first(const toml::node& n, const TaxFail& fail) {
  const auto s = n.value<std::string>();
  if (!s || n.type() != toml::node_type::string || (*s != "any" && *s != "tax-deferred-first"))
    fail(n, "must be \"any\" or \"tax-deferred-first\"");
  return *s == "tax-deferred-first";
}

Decimal read_gain_cap(const toml::node& n, const TaxFail& fail) {
  const Decimal v = exact_number(n, fail, "an amount (a number)");
  if (v.is_negative())
    fail(n, fmt::format("{} is below zero; a cap of 0 allows no net gain at all", v.str()));
  if (v.rounded(2) != v) fail(n, fmt::format("{} has more than two decimals", v.str()));
  return v;
}

HouseholdPrefs household_prefs(const TaxKeys& tax, std::set<std::int64_t> placed,
                               const Decimal& gain_used) {
  HouseholdPrefs prefs;
  prefs.sell_deferred_first = tax.sell_deferred_first;
  if (tax.gain_cap) prefs.gain_cap = std::max(Decimal(), *tax.gain_cap - gain_used);
  prefs.place_deferred = std::move(placed);
  return prefs;
}

std::string tax_caution(std::string_view whose) {
  return fmt::format(
      "This {} places and sells by each account's recorded tax status: tax treatment depends "
      "on local rules; check it with your tax authority or a licensed professional.",
      whose);
}

}  // namespace keel::rules
