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
//    the minor units of `currency`; a currency of which nothing is held needs
//    no rate); a missing rate throws InputError.
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
//    scope holds in that time (securities_held() is enough) and the rates of
//    every currency involved; a held security missing from it is a
//    std::logic_error, never a silent fall back to a trade price.
//  - Throws InputError when from > to, or as replay does for a broken ledger.
//  - Several periods of one scope (the statement's year, since inception and
//    trailing years) share one build over their union and slice() it: one
//    replay and one load of the closes.
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

// The income, tax and fees of one day of the period (in `currency`).
struct DayTotals {
  Date day;
  Decimal income, tax, fees;
};

struct LedgerSeries {
  std::vector<DayPoint> series;
  Decimal income;  // dividends + interest, in the period
  Decimal tax;
  Decimal fees;                     // fee transactions + transaction fees
  std::set<std::int64_t> unpriced;  // securities held without any price
  // The same day by day, so that a shorter period inside [from, to] can be
  // measured on this series (slice()): the totals of each day that has any,
  // and each day on which a security was held without a price.
  std::vector<DayTotals> totals;
  std::vector<std::pair<Date, std::int64_t>> unpriced_on;
  // The whole ledger's book at the close of each of the book days asked for
  // (every account, whatever the scope), in their order. Every one but the
  // last holds what is held only (Book::holdings_copy(): no realized parts,
  // moved cost or currency gains); the last is the whole book.
  std::vector<Book> books;
};

// The series of a shorter period [from, to] inside the one built: the same
// entries (perf::measure() ignores those outside the period), the totals of
// its days and the securities without a price on its days or on the latest
// entry on or before from - 1 (its opening value). Equal to building the
// series for [from, to] directly. Throws std::invalid_argument when [from,
// to] is not inside the span built.
LedgerSeries slice(const LedgerSeries& built, Date from, Date to);

// `book_days` (ascending, none before from - 1, else std::invalid_argument):
// days whose closing book is copied into `books` on the way (the last one,
// from the series' last entry on, is the replay's own book, moved; the others
// are holdings copies), so that a caller needing holdings on them, or gains on
// the last, does not replay the log again.
LedgerSeries build_series(const LedgerLog& log, const market::Series& prices,
                          std::optional<std::int64_t> account_id, Date from, Date to,
                          const std::string& currency, const std::vector<Date>& book_days = {});

// Every security the scope (one account by id, or the whole ledger) may hold
// at some time: those its transactions name and, through corporate actions,
// those they turn into; ascending. A Series of these, with
// Request::securities, is all build_series() reads closes of.
std::vector<std::int64_t> securities_held(const LedgerLog& log,
                                          std::optional<std::int64_t> account_id);

// Every currency the log's accounts, rows and the given securities use:
// what a Series needs to load for build_series().
std::vector<std::string> currencies_of(const LedgerLog& log,
                                       const std::vector<Security>& securities);

}  // namespace keel::perf
