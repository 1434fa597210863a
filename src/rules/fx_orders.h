// A pool across currencies for `keel propose`: what it holds valued in one
// currency (the pool's), and how its orders settle.
//
// Contract
//  - fx_pool(): each account's state as the engine takes it (rules/engine.h),
//    with every amount in `currency` at the rates known on `day`
//    (market::View::convert, rounded to the cent of `currency`): the
//    account's own cash, its cash in other currencies, and its lots' cost
//    (for the estimated gains). Cash in a currency without a rate into
//    `currency` on `day` is left out, with a note naming the pair and the
//    day, and is never spent. An account whose own currency has no rate into
//    `currency` throws InputError naming the pair and the day.
//    `cash` keeps what each account may spend, by currency, in its units.
//  - plan_cash(): planned cash (rules/planned_cash.h) is in its account's
//    own currency: it moves that cash in `cash`, and the account's cash in
//    the portfolio (and what a withdrawal must give) by the amount converted
//    into the pool's currency at the day's rate, which it records in
//    PlannedCash::converted when the currencies differ. Planned cash for an
//    account outside the pool is left alone.
//  - fx_orders(): the engine's orders (rules::orders) for the pool, settled.
//    Each order of a name in another currency than the pool's or the
//    account's gets its Order::Fx: the local price and value and the rate
//    used. In posting order (sells first): a sale's proceeds are kept in the
//    name's currency; a buy is paid from cash in the name's currency first,
//    and the rest settles in the account's currency at about the day's rate.
//    Estimated fees (in the pool's currency) are paid from the account's own
//    cash. An account whose own cash would go below zero is covered from its
//    other cash (currencies in alphabetical order). Every amount settled or
//    covered is a Conversion (one per account and pair) with its fee from the
//    rule's fee model on its value in the pool's currency; the fees are added
//    to the plan's estimated fees and taken from the accounts' cash after.
//    The conversions are inside the sizing: an account whose own cash would
//    still end below zero has what its conversions cost withheld from its
//    buys (HouseholdPrefs::withheld) and the orders are sized again, so that
//    the orders, the conversions and their fees fit its cash exactly (a note
//    names an account still short after kSizingRounds more rounds, which
//    only sells without buys to shrink can leave). Nothing here is booked:
//    these are estimates.
#pragma once

#include <map>
#include <set>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "ledger/book.h"
#include "market/view.h"
#include "model/records.h"
#include "rules/engine.h"
#include "rules/planned_cash.h"

namespace keel::rules {

struct FxPool {
  Portfolio portfolio;                               // amounts in the pool's currency
  std::vector<std::string> currency;                 // each account's own
  std::vector<std::map<std::string, Decimal>> cash;  // spendable, by currency, in its units
  bool converted = false;                            // some amount was converted
};

// Throws fx_pool()'s InputError for an account whose currency has no rate
// into `currency` on `day` (before anything is replayed).
void require_rates(const std::vector<Account>& pool, const std::string& currency,
                   const market::View& view, Date day);

FxPool fx_pool(const Book& book, const std::vector<Account>& pool, const std::string& currency,
               const market::View& view, Date day, std::set<std::int64_t>& held,
               std::vector<std::string>& notes);

void plan_cash(FxPool& pool, std::vector<PlannedCash>& planned, HouseholdPrefs& prefs,
               const std::string& currency, const market::View& view, Date day);

struct Conversion {
  std::string account;
  std::string from, to;
  Decimal amount;         // in `to`: what the orders need
  Decimal about;          // in `from`, at the day's rate, to its minor units
  std::string rate_text;  // the rate used (market::FxQuote::describe())
  Decimal fee;            // estimate, in the pool's currency
};

struct FxOrders {
  OrderPlan plan;
  std::vector<Conversion> conversions;
};

inline constexpr int kSizingRounds = 8;

FxOrders fx_orders(const FxPool& pool, const std::vector<Target>& targets, const Quotes& quotes,
                   const std::string& currency, const TradingRule& trading,
                   const market::View& view, Date day, HouseholdPrefs prefs,
                   std::vector<std::string>& notes);

}  // namespace keel::rules
