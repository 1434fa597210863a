// What rules::orders() (rules/engine.h) works out once for all its fee
// rounds, and orders_only() for runs that only apply the orders.
//
// buy_cost(): what a buy of a name costs per step, the same in every round:
//   its step (steps::step_of: the lot size, or 10^-4 units when the rule
//   trades fractions), a unit's price with the proportional fee, one step's
//   value, and the cash less the fixed fee below which no step fits (unset
//   for steps under 10^-6 units, where that bound does not hold). Exact
//   (Decimal); steps::buy_orders() works the same out for each call.
// orders_only(): orders() without its summary: the same orders, pool_value
//   and invested_target, and nothing else (no skips, estimated fees,
//   turnover, cash or weights after).
#pragma once

#include <optional>
#include <vector>

#include "rules/engine.h"

namespace keel::rules {

struct BuyCost {
  Decimal step, unit, one_step;
  std::optional<Decimal> no_step_below;
};
BuyCost buy_cost(const Quote& quote, const TradingRule& trading);

OrderPlan orders_only(const Portfolio& portfolio, const std::vector<Target>& targets,
                      const Quotes& quotes, const TradingRule& trading, Date as_of,
                      Explain explain = Explain::all, const HouseholdPrefs& prefs = {});

}  // namespace keel::rules
