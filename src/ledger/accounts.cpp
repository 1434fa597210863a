#include "ledger/accounts.h"

#include <fmt/format.h>

#include "core/error.h"
#include "core/text.h"
#include "ledger/tax.h"
#include "store/ledger_store.h"

namespace keel::ledger {
namespace {

std::string take_ledger_currency(store::Database& db, std::string_view what) {
  if (auto currency = store::ledger_currency(db)) return *currency;
  throw InputError(fmt::format(
      "{}: this ledger has no currency yet; give --currency (such as --currency EUR), or record "
      "one for the ledger with 'keel init --currency CODE'",
      what));
}

}  // namespace

std::int64_t add_account(store::Database& db, Account account, TaxStatus status) {
  if (account.currency.empty()) account.currency = take_ledger_currency(db, "account add");
  const auto id = store::insert_account(db, account);
  store::insert_tax_status(db, {id, since_opening(), status});
  // The first account of a ledger without a currency gives it its own.
  if (!store::ledger_currency(db) && store::list_accounts(db).size() == 1)
    store::set_ledger_currency(db, account.currency);
  return id;
}

std::int64_t add_security(store::Database& db, Security security) {
  if (security.currency.empty()) security.currency = take_ledger_currency(db, "security add");
  return store::insert_security(db, security);
}

std::optional<std::string> mixed_currencies(const std::vector<Account>& accounts) {
  bool mixed = false;
  for (const auto& a : accounts) mixed = mixed || a.currency != accounts.front().currency;
  if (!mixed) return std::nullopt;
  std::string each;
  for (const auto& a : accounts)
    each += fmt::format("{}{}: {}", each.empty() ? "" : "; ", printable(a.name), a.currency);
  return each;
}

std::optional<std::string> one_currency(const std::vector<Account>& accounts,
                                        std::string_view what) {
  if (const auto mixed = mixed_currencies(accounts))
    throw InputError(fmt::format(
        "{}: the accounts keep different currencies ({}) and keel does not convert between them "
        "yet; give --account for one account",
        what, *mixed));
  if (accounts.empty()) return std::nullopt;
  return accounts.front().currency;
}

}  // namespace keel::ledger
