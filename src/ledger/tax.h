// Tax facts of the household: each account's dated tax status, the
// repurchase window on sales at a loss, and withholding summed per security
// and per issuer country. keel keeps these facts apart; what they mean for a
// tax return is for local rules and a licensed professional.
//
// Contract
//  - TaxStatuses::on(): an account's status on a day is the latest change
//    dated on or before it; with none, the account is taxable.
//  - set_tax_status(): records a change from a day on. Throws InputError for
//    an unknown account, a second change dated the same day, or a change to
//    the status already in force that day (nothing would change). Runs
//    inside the caller's WriteTransaction.
//  - flag_repurchases(): a realized part at a loss is flagged when a buy of
//    the same security, in any account, is dated within `window_days` days
//    (inclusive) before or after the disposal day. The buy that opened the
//    lot being sold, and the buys of lots closed by the same sale, do not
//    count: they are not a repurchase. `window_days` must be 1 or more
//    (InputError naming --repurchase-window otherwise).
//  - withholding(): the tax rows of a calendar year in taxable accounts,
//    summed per security (with its country) and per country; tax rows of
//    other accounts are summed apart. Amounts are exact, in the ledger's
//    currency (refused, as for gains, when accounts keep several); a row in
//    another currency counts as the lot engine booked it (booked_amount,
//    ledger/fx_cash.h: the row's settlement rate, else the day's rate).
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "ledger/holdings.h"
#include "model/records.h"
#include "store/database.h"

namespace keel::ledger {

class TaxStatuses {
 public:
  static TaxStatuses load(store::Database& db);
  explicit TaxStatuses(std::vector<TaxStatusChange> changes);
  TaxStatus on(std::int64_t account_id, Date day) const;
  // Whether the account is taxable on every day from `from` to `to`.
  bool taxable_throughout(std::int64_t account_id, Date from, Date to) const;
  const std::vector<TaxStatusChange>& changes() const { return changes_; }

 private:
  std::vector<TaxStatusChange> changes_;  // by account id, then day
};

// The day a status given when an account is added holds from.
Date since_opening();

void set_tax_status(store::Database& db, std::string_view account, TaxStatus status, Date from);

void flag_repurchases(store::Database& db, std::vector<GainLine>& gains, int window_days);
// Throws the InputError for a window below one day (naming --repurchase-window).
void check_repurchase_window(int window_days);

struct WithholdingBySecurity {
  std::string symbol;
  std::optional<std::string> country;
  Decimal income;    // gross dividends and interest of that security in the year
  Decimal withheld;  // tax rows naming it
};
struct Withholding {
  std::vector<WithholdingBySecurity> by_security;  // by symbol; taxable accounts only
  std::map<std::string, Decimal> by_country;       // "" for no country or no security
  Decimal total;
  Decimal not_taxable;  // tax rows of tax-deferred and tax-exempt accounts
};
Withholding withholding(store::Database& db, int year,
                        const std::optional<std::string>& account = std::nullopt);
// The same from a log already read; `only`: one account by id. The view
// gives each security's symbol and country. `currency`: every amount, as
// booked in its account's currency, converted into it at the rate of its
// row's day (accounts may then keep different currencies); a missing rate
// throws InputError naming the pair and the day.
Withholding withholding_of(const LedgerLog& log, const market::View& view,
                           const TaxStatuses& statuses, int year,
                           std::optional<std::int64_t> only = std::nullopt,
                           const std::optional<std::string>& currency = std::nullopt);

}  // namespace keel::ledger
