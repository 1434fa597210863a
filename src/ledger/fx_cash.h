// Foreign currencies in the lot engine: the rules Book follows for a row in
// another currency than its account's, and for exchanges. The code is
// Book's (ledger/fx_cash.cpp); this header states the method.
//
// With A the account's currency and C the row's:
//  - Cash in C is kept as lots (units of C, cost in A). A deposit, a
//    dividend or interest kept in C, a sale's proceeds kept in C, or C bought
//    by an exchange opens a lot; its cost is what the account gave for it
//    (an exchange from A: the A paid, fee included) or else its value at the
//    day's stored rate.
//  - Spending C (a buy, a withdrawal, a fee, a withholding tax, an exchange
//    out of C) takes lots on the account's lot method (specific: oldest
//    first, since cash has no lot ids to name) and realizes their currency
//    gain: proceeds in A at the day's stored rate (an exchange into A: the A
//    received) minus their cost. Cash in C never goes below zero.
//  - A row with a settlement `rate` (C units per A unit, as the broker
//    showed it) settles in A cash instead: amount / rate, rounded half-to-even
//    to A's minor units (ISO 4217). No foreign cash moves.
//  - A buy of a security in C: the lot's cost in C is quantity x price plus
//    fee; its cost in A is fixed now, at the settlement rate when one is
//    given, else at the day's stored rate (the rate at which the C cash it
//    spent was valued). A sale: proceeds in A likewise; each lot's gain in A
//    splits into a price part, (proceeds - cost) in C converted at the
//    sale's rate, and a currency part, the rest (docs/methods-ledger.md).
//  - An exchange of `amount` C1 into C2 at `rate` (C2 per C1) with a fee in
//    C1: C2 receives amount x rate rounded to C2's minor units; C1 gives
//    amount + fee.
//  - A transfer of cash in C moves its lots (with their cost when both
//    accounts keep the same currency; else at the day's stored rate), and
//    realizes nothing; Book::fx_cash_moved() records the cost that left and
//    arrived, which the statement counts as the transfer (report/statement.h).
// Every missing rate throws InputError naming the pair and the day.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/decimal.h"
#include "ledger/book.h"
#include "market/view.h"
#include "model/records.h"

namespace keel::ledger {

// The account-currency amount a settlement rate gives for `amount` of the
// row's currency: amount / rate, to the minor units of `account_currency`.
Decimal settle(const Decimal& amount, const Decimal& rate, const std::string& account_currency);
// What an exchange of `amount` at `rate` yields in `to_currency`.
Decimal exchanged(const Decimal& amount, const Decimal& rate, const std::string& to_currency);

// An amount of a row in `currency` as the lot engine books it in the
// account's currency: at the row's settlement `rate` when it has one (settle),
// else at the day's stored rate (market::View::convert), which is then given
// in `day_rate` (account currency -> row currency). Unchanged when the row is
// in the account's currency. A missing rate throws InputError naming the pair
// and the day.
struct BookedAmount {
  Decimal amount;                           // in the account's currency
  std::optional<Decimal> row_rate;          // the row's settlement rate, when used
  std::optional<market::FxQuote> day_rate;  // the stored rate, when used
  bool converted() const { return row_rate || day_rate; }
};
BookedAmount booked_amount(const Decimal& amount, const std::string& currency,
                           const std::optional<Decimal>& rate, const std::string& account_currency,
                           Date day, const market::View& view);

}  // namespace keel::ledger
