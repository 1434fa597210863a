// The year-end statement of one account or the whole ledger: every section as
// plain data, assembled from the ledger and the performance module, for the
// renderers in report/statement_forms.h.
//
// Contract
//  - Period: the calendar year, cut at the ledger's as-of day (the later of
//    the latest close and the latest transaction) when the year is still
//    running, and started at the first transaction day when the ledger began
//    during the year (see perf/period.h).
//  - Money is exact Decimal in the reporting currency (the request's
//    `currency`; else the account's with an account, else the one every
//    account keeps, or the ledger's own when they keep several), never
//    rounded here;
//    returns are fractions (0.05 = 5 %), taken from perf::returns_report()
//    and never recomputed.
//  - The year summary adds up exactly (docs/statement.md states the identity):
//      closing = opening + deposits - withdrawals + transfers in - transfers out
//                + dividends - withholding + interest - fees + realized gain
//                + change in unrealized gain - unrealized gain moved by transfers
//                + currency gain realized on foreign cash
//                + change in unrealized currency gain on foreign cash
//                + translation
//    `difference()` is the closing value minus the right-hand side; it is
//    zero when the ledger is consistent and is shown, not hidden, otherwise.
//    Trade fees sit inside cost basis and realized gain and are given as a
//    memo line only, never subtracted again.
//  - Realized gains are the lot engine's parts disposed in the period. A part
//    is long-term when held longer than `long_term_days` days (disposal day
//    minus acquisition day), or, when that is unset, when disposed of after
//    the first anniversary of its acquisition.
//  - Income detail: every dividend and interest payment in the period, each
//    with the tax rows of the same account, day and security (or no security)
//    as its withholding; tax rows without such a payment are listed apart.
//  - Foreign currencies (ledger/fx_cash.h, docs/methods-ledger.md): every
//    row in another currency counts as the lot engine booked it (the row's
//    settlement rate, else the stored rate of its day; income says which).
//    Positions and foreign cash are valued at the stored rate of the last day
//    (market::View::rate: direct, inverted or crossed, and said so); a
//    realized gain keeps its price part and currency part; foreign cash is
//    carried at cost, so its currency gain (realized when spent, unrealized
//    while held) is a line of its own, apart from price gains; a transfer of
//    foreign cash counts at its lots' cost, not its worth that day, so it
//    realizes no currency gain. A missing rate throws InputError naming the
//    pair and the day.
//  - Translation (docs/methods-ledger.md): when an account in scope keeps
//    another currency than the reporting one, its rows are booked in its own
//    currency (as above) and each is converted at the stored rate of its
//    day; values at the rate of the day valued, a lot's cost at the rate of
//    its acquisition day (as holdings --currency), foreign cash's cost and
//    its realized currency gain at the rate of the day valued or spent.
//    `translation` is what remains: the change in the reporting-currency
//    worth of what each account keeps in its own currency. `difference()` is
//    then each account's own check (its statement in its own currency)
//    converted at the closing rate: zero exactly when every account's own
//    statement adds up. Transfers between accounts
//    that keep different currencies move at the day's rate (the lot engine
//    books them so).
//  - Tax status (ledger/tax.h): realized gains, income and tax rows of an
//    account that is tax-deferred or tax-exempt on their day are not in
//    `gains`, `income` or `other_tax` but in `not_taxable` ("not a taxable
//    event here"); the year summary still counts them, as value. Withholding
//    of taxable accounts is also summed per security and per issuer country.
//  - Throws InputError (naming the option) for an unknown account or
//    benchmark, a benchmark without a close before the year, a year outside
//    kFirstStatementYear to kLastStatementYear or the ledger's history, a long-term threshold below
//    1, and a ledger without transactions.
#pragma once

#include <iterator>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "ledger/holdings.h"
#include "ledger/tax.h"
#include "perf/returns_report.h"
#include "store/database.h"

namespace keel::report {

// The years a statement can cover: its trailing 5-year line starts five years
// before the year ends, and no date lies before year 1.
inline constexpr int kTrailingYears[] = {3, 5};
inline constexpr int kFirstStatementYear = 6;
inline constexpr int kLastStatementYear = 9999;

static_assert(kFirstStatementYear == 1 + kTrailingYears[std::size(kTrailingYears) - 1]);
// "6 to 9999; it looks back 5 years", for messages.
std::string statement_years();

struct StatementRequest {
  int year = 0;
  std::optional<std::string> account;    // nullopt: the whole ledger
  std::optional<std::string> benchmark;  // security symbol
  std::optional<int> long_term_days;     // nullopt: more than one calendar year
  std::optional<std::string> currency;   // ISO 4217; nullopt: the default (see above)
};

struct YearSummary {
  Decimal opening_value;
  Decimal deposits, withdrawals;
  Decimal transfers_in, transfers_out;  // at market value on the day, as the returns count them
  Decimal dividends;                    // gross
  Decimal withholding;                  // every tax row in the period
  Decimal interest;
  Decimal fees;  // fee entries and the fees of transfers (charged to cash, not to a lot)
  Decimal realized_gain;
  Decimal unrealized_opening, unrealized_closing;
  Decimal unrealized_moved;  // unrealized gain that arrived (+) or left (-) with transferred units
  Decimal closing_value;
  Decimal trade_fees;  // memo: buy and sell fees, already inside cost basis and realized gain
  // Cash in other currencies, carried at cost: the currency gain realized by
  // spending it in the period, and its value less cost at each end.
  Decimal fx_cash_realized;
  Decimal fx_cash_unrealized_opening, fx_cash_unrealized_closing;
  // Accounts kept in another currency than the reporting one: what converting
  // their values and flows at the rates of different days adds (zero else).
  Decimal translation;

  Decimal unrealized_change() const { return unrealized_closing - unrealized_opening; }
  Decimal fx_cash_unrealized_change() const {
    return fx_cash_unrealized_closing - fx_cash_unrealized_opening;
  }
  Decimal explained_closing() const;  // the right-hand side of the identity
  Decimal difference() const { return closing_value - explained_closing(); }
};

struct PerformanceLine {
  std::string label;  // "this year", "since inception", "3 years", "5 years"
  bool available = false;
  std::string unavailable_reason;  // when not available
  Date from, to;
  int days = 0;
  std::optional<double> twr, twr_annualized;
  std::optional<double> mwr_period, mwr_annualized;
  std::string mwr_note;  // why there is no money-weighted return, when there is none
  std::optional<double> benchmark, benchmark_annualized;
  std::optional<double> excess, excess_annualized;  // arithmetic, R - B
  std::string benchmark_note;                       // why there is no benchmark figure
};

struct MonthCell {
  int month = 0;
  bool complete = false;
  double twr = 0;
  std::optional<double> benchmark;
};

struct GrowthPoint {
  Date day;
  double level = 1;  // growth of 1 since the close before the period
};

struct HoldingRow {
  ledger::HoldingLine line;
  Decimal weight;  // fraction of the closing value, 6 places, half-to-even
};

struct AllocationSlice {
  std::string label;  // symbol, or "cash"
  Decimal value;
  Decimal weight;  // fraction of the closing value
};

// How an amount in another currency was brought into the reporting one.
struct RateUsed {
  std::string currency;                // the row's
  Decimal local;                       // the amount in it
  std::optional<Decimal> row_rate;     // the row's settlement rate (row currency per unit)
  std::optional<market::FxQuote> day;  // else the stored rate of the row's day
  Decimal rate() const { return row_rate ? *row_rate : day->rate; }
  std::string source() const;  // "the row's rate" or "stored, 2025-06-13" (+ how derived)
};

struct IncomeRow {
  std::string account;
  Date day;
  std::string kind;    // "dividend" or "interest"
  std::string symbol;  // empty when none
  Decimal gross, withheld;
  std::optional<RateUsed> converted = std::nullopt;  // a payment in another currency
  // A payment in a third currency: `converted` took it into its account's
  // currency as booked, this into the reporting one (the stored rate of its
  // day, as reporting units per unit of the account's currency).
  std::optional<RateUsed> translated = std::nullopt;
  Decimal net() const { return gross - withheld; }
};

// Foreign cash spent in the period: its currency gain (Book::fx_realized).
struct FxCashGainRow {
  std::string account;
  FxRealized part;
};

struct TaxRow {
  std::string account;
  Date day;
  std::string symbol;
  Decimal amount;
};

// A gain, a payment or a tax row of an account that was not taxable that day.
struct NotTaxableRow {
  std::string account;
  std::string status;  // "tax-deferred" or "tax-exempt"
  Date day;
  std::string kind;    // "sale", "dividend", "interest" or "tax"
  std::string symbol;  // empty when none
  Decimal amount;      // the gain of a sale, the gross of a payment, or the tax
  Decimal withheld;    // tax booked with a payment (as in the income detail)
};

struct Statement {
  std::string scope;  // account name or "all accounts"
  std::string currency;
  int year = 0;
  Date from, to, as_of, inception;
  bool partial_year = false;  // the year is cut at the as-of day
  bool started_in_year = false;
  std::optional<std::string> benchmark;
  std::string long_term_rule;  // words for the threshold in use
  std::vector<std::string> unpriced;
  // Each account in scope that was reconciled with a broker's statement
  // (keel reconcile), with its last reconciled day.
  std::vector<std::pair<std::string, Date>> reconciled;

  YearSummary summary;
  std::vector<PerformanceLine> performance;  // this year first
  std::string twr_mwr_words;                 // empty when the two agree
  std::vector<MonthCell> months;
  std::vector<GrowthPoint> growth, benchmark_growth;
  std::vector<HoldingRow> holdings;
  std::vector<ledger::CashLine> cash;
  Decimal holdings_total;  // positions and cash at the close of `to`
  std::vector<AllocationSlice> allocation;
  std::vector<ledger::GainLine> gains;  // classified by the request's long-term rule
  ledger::GainsByTerm realized_totals;
  std::vector<IncomeRow> income;
  std::vector<TaxRow> other_tax;             // tax rows not matched to a payment
  std::vector<NotTaxableRow> not_taxable;    // by day; sales first within a day
  ledger::Withholding withholding;           // taxable accounts, the period's tax rows
  std::vector<FxCashGainRow> fx_cash_gains;  // by day, as the lot engine realized them
  bool foreign = false;                      // some figure was converted from another currency
  bool translated = false;  // some account in scope keeps another currency than `currency`
  std::vector<std::string> cautions;
};

Statement build_statement(store::Database& db, const StatementRequest& request);

// The cautions every form of the statement shows.
std::vector<std::string> statement_cautions();

}  // namespace keel::report
