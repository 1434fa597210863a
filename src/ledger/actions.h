// Corporate actions applied to lots: what each kind does to every account
// that holds the security at the start of the action's day.
//
// Units are the security's units; money is the account's currency, kept
// exact and rounded to the cent (kCostPlaces, half to even) only where cash
// changes hands. Costs are split with allocate() (largest remainder), so the
// parts of a lot's cost always add up to it exactly.
//
//  split           every lot's units x ratio, cost kept. With `in_lieu`, the
//                  units below a whole unit in each account are paid in cash.
//  stock_dividend  ratio new units per unit held join each lot (the lot's
//                  cost is spread over old and new units: the new units cost
//                  nothing themselves); fractions as for a split.
//  merger          every lot of A leaves. Its units x ratio arrive as a lot
//                  of the target with the same lot id and acquisition date,
//                  carrying cost_percent of the lot's cost; the cash part
//                  (units x cash) is a disposal whose cost is the rest.
//                  Without ratio it is an all-cash takeover: every lot is
//                  disposed of at cash per unit.
//  spinoff         each lot of A keeps its units and hands cost_percent of
//                  its cost to a new lot of the target (units x ratio, same
//                  lot id and acquisition date).
//  return_of_capital  cash per unit lowers each lot's cost; what a lot
//                  receives beyond its cost is a realized gain (a disposal of
//                  no units, proceeds the excess, cost zero).
//  delisting       every lot is disposed of at cash per unit (zero allowed).
//
// Fractions ("cash in lieu"): of the units an action hands out in an account
// (all the units after a split or stock dividend; the new units of a merger
// or spin-off), the part below one whole unit is sold at `in_lieu` per unit.
// The fraction is taken from those lots in the account's own lot order (FIFO
// for specific-lot accounts), as a sale would take it; its proceeds are the
// cash (rounded to the cent) and its cost its share of the lot.
//
// Cash of an action in an account is (units x figure) rounded to the cent,
// then shared among the lots by units with allocate().
#pragma once

#include <unordered_set>
#include <vector>

#include "ledger/book.h"
#include "model/records.h"

namespace keel {

// What one unit held at the start of the action's day becomes, for holders
// of units without lots (the back-test's simulated pool). The ledger's lots
// follow the same figures (ActionEngine below).
struct UnitEffect {
  Decimal keeps;         // units of the security per unit held afterwards; 0: it leaves
  Decimal target_units;  // units of the target per unit held (merger, spin-off)
  Decimal cash;          // cash per unit held, before rounding
};
// Throws InputError as ActionEngine::apply does for a missing figure.
UnitEffect unit_effect(const CorporateAction& action);
// Cash an action pays a holder of `units`: units x per unit, rounded to the
// cent (kCostPlaces), half to even.
Decimal action_cash(const Decimal& units, const Decimal& per_unit);
// The part of `units` below a whole unit (what cash in lieu pays for).
Decimal fraction_of(const Decimal& units);

class ActionEngine {
 public:
  explicit ActionEngine(Book& book) : book_(book) {}
  // Applies `action` to every account; throws InputError if the action lacks
  // a figure its kind needs (the posting checks refuse such rows first).
  void apply(const CorporateAction& action);

 private:
  void split_units(const CorporateAction& a, const Decimal& factor);
  void return_capital(const CorporateAction& a);
  void dispose_all(const CorporateAction& a);
  void merge(const CorporateAction& a);
  void spin_off(const CorporateAction& a);
  // Pays the fraction of the units in `lot_ids` (all lots when empty) of
  // `security_id` in account number `index` at a.in_lieu per unit.
  void pay_fraction(const CorporateAction& a, std::size_t index, std::int64_t security_id,
                    const std::unordered_set<std::int64_t>& lot_ids);
  void realize(const CorporateAction& a, std::size_t index, std::int64_t security_id,
               const Lot& lot, const Decimal& proceeds);
  Book& book_;
};

}  // namespace keel
