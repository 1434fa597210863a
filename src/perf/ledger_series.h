// The value-and-flow series of a ledger scope, ready for perf::measure().
//
// Contract
//  - Scope: one account (by id) or the whole ledger (nullopt).
//  - One entry per day in [from - 1, to] on which a live transaction, a split,
//    a corporate action or any close exists, or an exchange rate while the
//    scope holds something in another currency, plus from - 1 itself (the
//    opening value).
//  - Amounts are in `currency`, the reporting currency. V_t = sum over
//    positions in scope of quantity x price + cash in scope (every currency
//    of it), at the close of t (after the day's transactions); price = the
//    close on or before t, else the ledger's last trade price, else the
//    position cannot be valued: it counts as zero and its security is listed
//    in `unpriced`. What is held in another currency (positions in it at
//    their local prices, and its cash) is added up in that currency and
//    converted at the rate of day t (market::View::convert: rounded once to
//    the minor units of `currency`); a missing rate throws InputError.
//  - External flows (positive amounts): deposits in, withdrawals out; cash
//    transfers at their amount; security transfers at quantity x (close on or
//    before the day, else the transfer's price, else the last trade price);
//    each in its row's currency converted at the rate of its day.
//    For the whole ledger a linked transfer pair between its own accounts is
//    internal (no flow); for one account both halves are flows.
//    Dividends, interest, tax and fees stay inside (they move the value).
//  - Totals over from..to (days inside the period only): income = dividends +
//    interest; tax; fees = fee transactions + the fee of every transaction;
//    each converted at the rate of its day.
//  - One replay of the log, stepping day by day; closes come from a
//    market::Series that spans [from - 1, to], holds every security the
//    scope holds in that time and the rates of every currency involved.
//  - Throws InputError when from > to, or as replay does for a broken ledger.
#pragma once

#include <cstdint>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "ledger/book.h"
#include "market/series.h"
#include "perf/performance.h"

namespace keel::perf {

struct LedgerSeries {
  std::vector<DayPoint> series;
  Decimal income;  // dividends + interest, in the period
  Decimal tax;
  Decimal fees;                     // fee transactions + transaction fees
  std::set<std::int64_t> unpriced;  // securities held without any price
};

LedgerSeries build_series(const LedgerLog& log, const market::Series& prices,
                          std::optional<std::int64_t> account_id, Date from, Date to,
                          const std::string& currency);

// Every currency the log's accounts, rows and the given securities use:
// what a Series needs to load for build_series().
std::vector<std::string> currencies_of(const LedgerLog& log,
                                       const std::vector<Security>& securities);

}  // namespace keel::perf
