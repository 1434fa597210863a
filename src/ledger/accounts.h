// Accounts, securities and the ledger's own currency.
//
// Contract
//  - add_account(): an account given no currency (empty) takes the ledger's;
//    when the ledger has none yet it is refused, saying how to give one. The
//    first account added to a ledger without a currency makes its own
//    currency the ledger's. Its tax status (taxable unless given) is
//    recorded as holding since its opening (ledger/tax.h). Runs inside the
//    caller's WriteTransaction.
//  - add_security(): a security given no currency takes the ledger's; refused
//    when the ledger has none.
//  - one_currency(): the currency every one of `accounts` keeps (unset when
//    there are none). keel does not convert between currencies yet, so a
//    figure adding amounts of several accounts is refused when they keep
//    different ones: InputError "WHAT: the accounts keep different currencies
//    (A: EUR; B: USD) ...", naming each.
//  - change_security() / rename_account(): new descriptive values for a record
//    that keeps its id (and so its history, closes and figures); each changed
//    field's old value is kept with `effective`, the first day of the new
//    one. A change to the same value, or to a symbol or name another record
//    has, is refused. Runs inside the caller's WriteTransaction.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "model/records.h"
#include "model/security.h"
#include "store/database.h"

namespace keel::ledger {

std::int64_t add_account(store::Database& db, Account account,
                         TaxStatus status = TaxStatus::taxable);
std::int64_t add_security(store::Database& db, Security security);
struct SecurityChange {
  std::optional<std::string> symbol, name, sector;
  std::optional<Decimal> lot_size;
};
// Returns the security as it now is.
Security change_security(store::Database& db, const std::string& symbol,
                         const SecurityChange& change, Date effective);
void rename_account(store::Database& db, const std::string& name, const std::string& new_name,
                    Date effective);
std::optional<std::string> one_currency(const std::vector<Account>& accounts,
                                        std::string_view what);
// "A: EUR; B: USD" when `accounts` keep more than one currency; else unset.
std::optional<std::string> mixed_currencies(const std::vector<Account>& accounts);

}  // namespace keel::ledger
