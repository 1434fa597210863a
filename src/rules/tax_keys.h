// The tax keys a rule file and a plan file share ([tax] sell_from and
// gain_cap; `place` on a rule's sleeve or a plan's part), read and turned
// into the order steps' preferences (HouseholdPrefs, rules/engine.h) by one
// implementation, so both files mean the same and refuse in the same words.
//
// Contract
//  - The readers take a TOML value and a `fail(node, why)` that must throw
//    (each file's own "FILE:LINE...: key 'KEY': why"); the `why` is the same
//    for both files.
//  - sell_from: "any" (default) or "tax-deferred-first". place: "any"
//    (default) or "tax-deferred-first". gain_cap: an amount in the accounts'
//    currency, 0 or more, at most two decimals.
//  - TaxKeys itself is declared in rules/rule.h (a rule file holds one).
//  - The defaults change nothing: a proposal without tax keys is the one it
//    was before they existed.
#pragma once

#include <toml++/toml.h>

#include <cstdint>
#include <functional>
#include <optional>
#include <set>
#include <string>
#include <string_view>

#include "core/decimal.h"
#include "rules/engine.h"
#include "rules/rule.h"

namespace keel::rules {

using TaxFail = std::function<void(const toml::node&, std::string_view why)>;

// sell_from and place: true for "tax-deferred-first".
bool read_deferred_first(const toml::node& value, const TaxFail& fail);
Decimal read_gain_cap(const toml::node& value, const TaxFail& fail);

// The preferences for one pool: `placed` are the names bought in tax-deferred
// accounts first; `gain_used` is the net estimated gain earlier pools of the
// same proposal realized (the cap is one for the whole proposal).
HouseholdPrefs household_prefs(const TaxKeys& tax, std::set<std::int64_t> placed,
                               const Decimal& gain_used);

// The caution every proposal that uses a tax key ends with; `whose` is
// "plan" or "rule".
std::string tax_caution(std::string_view whose);

}  // namespace keel::rules
