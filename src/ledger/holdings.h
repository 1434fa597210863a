// Holdings: what the ledger holds on a day, valued at that day's prices.
//
// A position's price is its latest close on or before the day, else its
// latest trade price; market value is quantity x price, exact. Amounts are
// in each account's own currency: a position in another currency and cash
// in another currency are converted at the latest stored rate on or before
// the day (market/fx_rates.h; rounded to the account currency's minor
// units), and the line keeps its local figures and the rate used; a missing
// rate throws InputError naming the pair and the day. Holdings of every
// account, and gains whose sales span several accounts, are refused when
// those accounts keep different currencies (one_currency,
// ledger/accounts.h) unless a reporting currency is given.
//
// Reporting currency (--currency R): every account's figures are then in R.
// Values convert at the rate of the day asked (a security's local value and
// foreign cash straight from their own currency; an account's own cash from
// its currency); a lot's cost is what it cost in R: its cost in the
// security's currency when that is R, else its cost in the account's currency
// converted at the rate of its acquisition day; a realized part's proceeds
// likewise at the rate of its disposal day (the local proceeds when the
// security trades in R), and its price part is the local gain at that rate.
// A foreign cash line's `cost` stays in the account's currency. An account's
// own cash of zero needs no rate (its line then has none). A missing rate
// throws InputError naming the pair, the day and what needed it.
// Throws InputError for an unknown account name.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "ledger/book.h"
#include "market/view.h"
#include "store/database.h"

namespace keel::ledger {

class TaxStatuses;  // ledger/tax.h

// The security of an id taken from the ledger's own rows, which the view of
// that ledger always holds; std::logic_error otherwise (a broken invariant).
const Security& known_security(const market::View& view, std::int64_t security_id);

struct HoldingLine {
  std::string account;
  std::string symbol;
  Decimal quantity;
  Decimal cost_basis;
  Decimal price;
  Date price_date;  // day of the close used, or of the trade price
  bool price_is_close = true;
  Decimal market_value;
  Decimal unrealized_gain;
  // A security in another currency than the account's: that currency, the
  // rate used (account currency -> security currency) and the value in it.
  std::string currency = {};
  std::optional<market::FxQuote> rate = std::nullopt;
  Decimal local_value = {};
};

struct CashLine {
  std::string account;
  Decimal amount;  // in `currency`
  // Cash in another currency: its code, the rate used and its value in the
  // account's currency; empty currency: the account's own cash.
  std::string currency = {};
  std::optional<market::FxQuote> rate = std::nullopt;
  Decimal value = {};
  Decimal cost = {};  // cash in another currency: its lots' cost in the account's currency
  // The account's own cash, shown in another reporting currency: it has no
  // cost and no currency gain of its own.
  bool own = false;
  Decimal currency_gain() const { return value - cost; }               // unrealized, of such cash
  Decimal worth() const { return currency.empty() ? amount : value; }  // in the account's
};

struct Holdings {
  Date as_of;
  std::vector<HoldingLine> positions;  // by account, then symbol
  std::vector<CashLine> cash;          // by account
  Decimal total_value;
};

// The currency a report is in: `asked` (an ISO 4217 code) when given; else
// the account's when `account` names one; else the one every account keeps,
// or, when they keep several, the ledger's own. Throws InputError for an
// unknown account.
std::string reporting_currency(store::Database& db, const std::optional<std::string>& asked,
                               const std::optional<std::string>& account);

Holdings holdings(store::Database& db, Date as_of,
                  const std::optional<std::string>& account = std::nullopt,
                  const std::optional<std::string>& currency = std::nullopt);
// The same from a book already replayed to `as_of` and a view of the ledger's
// market data: a report that needs several days replays the log once
// (Replayer) and asks at each. `only`: one account by id. `currency`: the
// reporting currency (unset: each account's own).
Holdings holdings_of(const Book& book, const market::View& view, Date as_of,
                     std::optional<std::int64_t> only = std::nullopt,
                     const std::optional<std::string>& currency = std::nullopt);

struct LotLine {
  std::string account;
  std::string symbol;
  Lot lot;
};
// `currency`: each lot's cost in that currency (see above), else the account's.
std::vector<LotLine> open_lots(store::Database& db, Date as_of,
                               const std::optional<std::string>& account = std::nullopt,
                               const std::optional<std::string>& currency = std::nullopt);

// A buy of the same security near a sale at a loss (ledger/tax.h).
struct Repurchase {
  std::int64_t txn_id = 0;
  std::string account;
  Date day;
};

struct GainLine {
  std::string account;
  std::string symbol;
  RealizedPart part;
  int days_held = 0;  // disposal day minus acquisition day
  bool long_term = false;
  TaxStatus tax_status = TaxStatus::taxable;  // the account's, on the disposal day
  std::optional<Repurchase> repurchase{};     // set only by flag_repurchases()
  bool taxable() const { return tax_status == TaxStatus::taxable; }
};
// Realized gains of parts disposed in `year` (every year when unset), in the
// lot engine's order, each with its account's tax status on the disposal day. A part is long-term
// when held more than `long_term_days` days, or, when that is unset, when disposed of after the
// first anniversary of its acquisition (held_long_term).
std::vector<GainLine> realized_gains(store::Database& db, std::optional<int> year,
                                     const std::optional<std::string>& account = std::nullopt,
                                     std::optional<int> long_term_days = std::nullopt,
                                     const std::optional<std::string>& currency = std::nullopt);
// The same from a replayed book: the parts it has realized so far.
// `currency`: every part in that currency (see above), else its account's.
std::vector<GainLine> realized_gains_of(const Book& book, const market::View& view,
                                        const TaxStatuses& statuses, std::optional<int> year,
                                        std::optional<std::int64_t> only = std::nullopt,
                                        std::optional<int> long_term_days = std::nullopt,
                                        const std::optional<std::string>& currency = std::nullopt);
bool held_long_term(Date acquired, Date disposed);

struct GainTotals {
  Decimal proceeds, cost, gain;
  int parts = 0;
};
struct GainsByTerm {
  GainTotals short_term, long_term;
  GainTotals all() const;
};
GainsByTerm totals_by_term(const std::vector<GainLine>& gains);

}  // namespace keel::ledger
