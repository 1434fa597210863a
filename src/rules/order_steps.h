// The steps of rules::orders() (rules/engine.h), each with its own contract
// and tests (tests/unit/rules_order_steps_test.cpp). orders() runs them in
// this order for each guess of the plan's own fees:
//
//  1. value_pool(): each account's value at the quotes; its cash reserve is
//     reserve_pct of its value less the fee guess, to the cent; the invested
//     target is the pool's value less the fee guesses and the reserves.
//  2. work_list(): every security the plan touches (the targets in their
//     order, then other positive holdings by symbol) with its value now, its
//     target value (to the cent) and both as weights of the pool (6 places).
//  3. decide(): for one name, nothing (at target), a skip with its reason
//     (no close; inside the drift band; a sell of less than one lot or below
//     the minimum trade), a buy of a value, or a sell of units (all of them
//     for an exit, else the whole steps that bring it down to target).
//  4. sell_orders(): a sell's units taken from the pool's lots in the rule's
//     order (highest cost, longest held, or losses first, then long-term
//     before short-term gains), one order per account, with the lots taken
//     and their cost to the cent.
//  5. buy_orders(): the cash above the reserves shared among the buys in
//     proportion to what each needs (fees included), then what rounding left
//     filled largest gap first, never past a target; accounts holding the
//     name first, then by cash to spend.
//     With HouseholdPrefs: accounts that are not taxable first
//     (sell_deferred_first), and in taxable accounts no more net estimated
//     gain than the cap leaves (the units it keeps are listed as kept).
//  4b. raise_cash(): an account that must give more cash than it holds after
//     the sells sells more of its own lots: first what stands above target of
//     names the proposal does not buy, then (only when that is not enough)
//     below target, names the proposal does not buy first; each time losses
//     first, then long-term, then short-term gains, the most overweight name
//     first, within the cap.
//  4c. rebuy_after_raise(): the buys then work on the pool the raise leaves:
//     a name it sold below target is bought up to target elsewhere, and the
//     buy's reason says why; nothing else is both sold and bought.
//  5. buy_orders(): (as below) names placed in tax-deferred accounts are
//     bought first, there first.
//  6. summarize(): fees, turnover, cash after and weights after the orders.
// Money is exact (Decimal) throughout; nothing is rounded but where a trade
// or a reserve must be.
#pragma once

#include <cstdint>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "rules/engine.h"

namespace keel::rules::steps {

struct PoolValue {
  Decimal value;                 // cash and holdings at the quotes
  Decimal invested_target;       // value less the fee guesses and the reserves
  std::vector<Decimal> cash;     // per account
  std::vector<Decimal> reserve;  // per account, to the cent
};
PoolValue value_pool(const Portfolio& portfolio, const Quotes& quotes, const TradingRule& trading,
                     const std::vector<Decimal>& fee_guess);
// value_pool() in two parts, for the rounds of orders(): each account's value
// (which the fee guesses do not change), then the pool on a guess.
std::vector<Decimal> account_values(const Portfolio& portfolio, const Quotes& quotes);
PoolValue pool_of(const Portfolio& portfolio, const std::vector<Decimal>& values,
                  const TradingRule& trading, const std::vector<Decimal>& fee_guess);

// The targets' securities, sorted (one allocation, not one per name), and
// whether one is named twice: work_names() and Inputs::quotes() then keep
// its first target (rare: a set says which).
struct TargetIds {
  std::vector<std::int64_t> sorted;
  bool repeats = false;
  bool has(std::int64_t id) const;
};
TargetIds target_ids(const std::vector<Target>& targets);

struct Work {
  std::int64_t security_id = 0;
  const Quote* quote = nullptr;
  const Target* target = nullptr;  // null: held, not among the targets
  Decimal held;                    // units across the pool's accounts
  Decimal now_value;
  Decimal target_value;
  Decimal w_now, w_target;
  std::string why;
};
std::vector<Work> work_list(const Portfolio& portfolio, const std::vector<Target>& targets,
                            const Quotes& quotes, const PoolValue& pool);
// work_list() in two parts, for the rounds of orders(): the names with what
// they hold now (pool_value > 0), then aim(): each target value and weight on
// `pool`. With `fresh` false a target value that did not change keeps its
// weight as it is. aim() returns whether it set any target value anew
// (always, with `fresh`): when not, the work list is what it was.
std::vector<Work> work_names(const Portfolio& portfolio, const std::vector<Target>& targets,
                             const Quotes& quotes, const Decimal& pool_value);
bool aim(std::vector<Work>& work, const PoolValue& pool, bool fresh);

struct Decision {
  enum class Kind { none, skip, buy, sell };
  Kind kind = Kind::none;
  std::string why;     // skip: the reason
  Decimal buy_value;   // buy: the value wanted
  Decimal sell_units;  // sell: the units
  std::string reason;  // buy and sell: the order's reason
};
// Explain::none leaves the reasons empty (for runs that do not show them).
Decision decide(const Work& work, const TradingRule& trading, Date as_of,
                Explain explain = Explain::all);

// Quantities are in whole steps of this size: the lot size, or 10^-4 units
// when the rule trades fractions.
Decimal step_of(const Quote& quote, const TradingRule& trading);

// The tax side of one plan's sells: the preferences, the net estimated gain
// realized in taxable accounts so far, and what the gain cap kept.
struct SellTax {
  const HouseholdPrefs* prefs = nullptr;
  Decimal gain_used;
  std::vector<Skipped> kept;
};

std::vector<Order> sell_orders(const Work& work, const Decimal& units, const std::string& reason,
                               const Portfolio& portfolio, const TradingRule& trading, Date as_of,
                               SellTax* tax = nullptr);
// The same orders, added at the end of `out` (built where they are kept: an
// order is large); the orders already in `out` are left as they are.
void sell_orders(const Work& work, const Decimal& units, const std::string& reason,
                 const Portfolio& portfolio, const TradingRule& trading, Date as_of, SellTax* tax,
                 std::vector<Order>& out);

// Sells in account `a` (adding to `orders`, one order per account and
// security) until its cash `cash[a]` is at least zero, or nothing more can
// be sold; returns whether it got there. `bought`: the names the proposal
// buys, sold only when nothing else is left.
bool raise_cash(std::size_t a, const std::vector<Work>& work, const Portfolio& portfolio,
                const TradingRule& trading, Date as_of, std::vector<Order>& orders,
                std::vector<Decimal>& cash, SellTax& tax, Explain explain,
                const std::set<std::int64_t>& bought);

struct BuyWish {
  const Work* work = nullptr;
  Decimal want;  // value
  std::string reason;
};
// After the raises: each name they sold below target gets a buy up to its
// target (a wish of its own, or its wish raised), with the reason; `before`
// holds the quantities of `orders` before the raises.
void rebuy_after_raise(const std::vector<Work>& work, const std::vector<Order>& orders,
                       const std::vector<Decimal>& before, const TradingRule& trading,
                       std::vector<BuyWish>& wishes, std::vector<Skipped>& skipped,
                       Explain explain);
// Orders for the buys and the skips of buys that got nothing; `cash` (per
// account) is spent as the orders are made.
struct Buys {
  std::vector<Order> orders;  // by buy, then account
  std::vector<Skipped> skipped;
};
Buys buy_orders(const std::vector<BuyWish>& wishes, const Portfolio& portfolio,
                std::vector<Decimal>& cash, const std::vector<Decimal>& reserve,
                const TradingRule& trading, Explain explain = Explain::all,
                const HouseholdPrefs& prefs = {});

void summarize(OrderPlan& plan, const Portfolio& portfolio, const std::vector<Work>& work,
               const PoolValue& pool);

}  // namespace keel::rules::steps
