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
std::optional<std::string> one_currency(const std::vector<Account>& accounts,
                                        std::string_view what);
// "A: EUR; B: USD" when `accounts` keep more than one currency; else unset.
std::optional<std::string> mixed_currencies(const std::vector<Account>& accounts);

}  // namespace keel::ledger
