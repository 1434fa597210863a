// Planned cash: a deposit or withdrawal not booked yet (--deposit and
// --withdraw ACCOUNT=AMOUNT) that a proposal, of a rule or of a plan, plans
// with. One implementation for both.
//
// Contract
//  - parse_planned_cash(): "ACCOUNT=AMOUNT" (or a bare AMOUNT when the
//    proposal has a single account); the amount is above zero with at most
//    two decimals; an InputError names the option and shows the form.
//  - resolve_planned(): fills in the account of a bare amount; an account
//    outside the proposal's accounts is an InputError naming the option (and
//    the nearest account for a near miss). `whose` is "plan" or "rule".
//  - A proposal moves each account's cash by its planned amounts, in the
//    account's own currency, and records what a withdrawal must give
//    (rules::plan_cash in rules/fx_orders.h); never booked.
//  - refuse_unraisable() (before the orders) and refuse_ungiven() (after):
//    a withdrawal larger than the account's cash and managed holdings at a
//    close, or one its sells could not raise (the gain cap, nothing more to
//    sell), is an InputError naming --withdraw.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "model/records.h"
#include "rules/engine.h"

namespace keel::rules {

struct PlannedCash {
  std::string option;   // "--deposit" or "--withdraw", for messages
  std::string account;  // empty: the proposal's only account
  Decimal amount;       // deposits positive, withdrawals negative, in the account's currency
  // Filled in by a proposal: the account's currency, and the amount in the
  // proposal's currency when that is another (at the as-of day's rate).
  std::string currency;
  std::optional<Decimal> converted;
  std::string into;  // the proposal's currency, with `converted`
};

PlannedCash parse_planned_cash(std::string_view option, std::string_view text);

void resolve_planned(std::vector<PlannedCash>& planned, const std::vector<Account>& accounts,
                     std::string_view whose);

void refuse_unraisable(const Portfolio& portfolio, const Quotes& quotes,
                       const HouseholdPrefs& prefs, Date as_of);

// `cap` is the gain cap as written (for the message).
void refuse_ungiven(const Portfolio& portfolio, const OrderPlan& plan, const HouseholdPrefs& prefs,
                    const std::optional<Decimal>& cap, Date as_of);

}  // namespace keel::rules
