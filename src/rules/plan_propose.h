// Plan proposals: every part of a plan (rules/plan.h) proposed together on
// one as-of day, through the same input builder (rules/inputs.h) and order
// steps (rules/order_steps.h) as a single rule's proposal (rules/propose.h).
//
// Contract
//  - Each pool is worked out once: its parts' targets, each scaled by the
//    part's share, go to rules::orders() together, so an account and a
//    security get at most one order (the parts' wishes are netted) and no
//    part sells what another holds. A rule part's names are its universe and
//    its sleeves; a fixed part's are its symbols. A name in two parts of one
//    pool is an InputError naming both parts.
//  - A held name outside every part of its pool is unmanaged: listed with its
//    value and left out of the pool (never sold, and not in the value the
//    shares divide), unless the pool says unmanaged = "sell".
//  - The pool trades by the [trading] table of its first rule part (defaults
//    for a pool of fixed parts only); another rule part of the pool with
//    different trading settings is refused at its `trading` key.
//  - Planned cash (a deposit > 0, a withdrawal < 0) moves an account's cash
//    before the orders and is never booked; an account outside the plan, or
//    a withdrawal larger than the cash, is an InputError naming the option
//    (and the plan's nearest account for a near miss).
//  - Across currencies, each pool works as a rule's proposal does
//    (rules/propose.h, rules/fx_orders.h): valued in `currency` (by default
//    its accounts' one currency, else the ledger's), names in other
//    currencies screened, quoted and sized at the as-of day's rates, each
//    such order with its local price, rate and settlement, and the pool's
//    conversions with their estimated fees. Planned cash is in its account's
//    own currency.
//  - Orders carry the part's name before their reason. The as-of day, notes
//    and cautions are those of rules::propose(). Reads the ledger; writes
//    nothing.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "rules/engine.h"
#include "rules/fx_orders.h"
#include "rules/plan.h"
#include "rules/planned_cash.h"
#include "store/database.h"

namespace keel::rules {

struct PartResult {
  std::string name;
  std::string rule;  // the rule's name; empty for a fixed sleeve
  std::string rule_file;
  std::string pool;
  Decimal share;                       // fraction of the pool's managed value
  std::optional<ScreenResult> screen;  // rule parts
  std::vector<Target> targets;         // weights of the pool's invested value (share applied)
  std::vector<Order> orders;           // the pool's orders for this part's names
};

struct UnmanagedHolding {
  std::string pool, account, symbol;
  Decimal quantity, price, value;
  bool sold = false;  // the pool sells unmanaged names
};

struct PoolResult {
  std::string name;
  std::vector<std::string> accounts;
  std::string trading_from;  // the part whose [trading] the pool uses; empty: defaults
  std::string currency;      // what the pool's value, targets and order values are in
  bool converted = false;    // some amount or price was converted into it
  OrderPlan plan;
  std::vector<Conversion> conversions;  // the currency conversions its orders need
};

struct PlanProposal {
  Date as_of;
  std::int64_t last_txn_id = 0;  // the ledger's highest transaction id when proposed
  std::string plan_name;
  std::vector<PoolResult> pools;
  std::vector<PartResult> parts;  // in the plan's order
  std::vector<UnmanagedHolding> unmanaged;
  std::vector<PlannedCash> planned;  // with the account filled in
  std::vector<std::string> notes;
  std::vector<std::string> cautions;
};

// `currency`: what every pool is valued in (default: its accounts' currency
// when they share one, else the ledger's).
PlanProposal propose_plan(store::Database& db, const Plan& plan,
                          std::optional<Date> as_of = std::nullopt,
                          std::vector<PlannedCash> planned = {},
                          std::optional<std::string> currency = std::nullopt);

// Stores a plan's proposal (the plan's text, its accounts, each order under
// its part) in one write transaction and returns its id; review() in
// rules/propose.h sets it against what was traded since.
std::int64_t save_plan(store::Database& db, const Plan& plan, const PlanProposal& proposal);

}  // namespace keel::rules
