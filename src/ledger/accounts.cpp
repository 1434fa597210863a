#include "ledger/accounts.h"

#include <fmt/format.h>

#include "core/error.h"
#include "core/text.h"
#include "ledger/tax.h"
#include "store/ledger_store.h"
#include "store/record_change_store.h"

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

Security change_security(store::Database& db, const std::string& symbol,
                         const SecurityChange& change, Date effective) {
  const Security before = store::security_with_symbol(db, symbol);
  Security after = before;
  std::vector<store::RecordChange> changes;
  auto field = [&](const char* name, std::optional<std::string> old_value,
                   std::optional<std::string> new_value) {
    if (old_value == new_value) return;
    changes.push_back(
        {0, "security", before.id, name, std::move(old_value), std::move(new_value), effective});
  };
  if (change.symbol) after.symbol = *change.symbol;
  if (change.name) after.name = *change.name;
  if (change.sector) after.sector = change.sector->empty() ? std::nullopt : change.sector;
  if (change.lot_size) after.lot_size = *change.lot_size;
  validate(after);
  if (!after.lot_size.is_positive())
    throw InputError(fmt::format("--lot-size must be positive, not {}", after.lot_size.str()));
  field("symbol", before.symbol, after.symbol);
  field("name", before.name, after.name);
  field("sector", before.sector, after.sector);
  field("lot_size", before.lot_size.str(), after.lot_size.str());
  if (changes.empty())
    throw InputError(fmt::format("security '{}': nothing to change", printable(symbol)));
  store::update_security(db, after);
  for (const auto& c : changes) store::insert_record_change(db, c);
  return after;
}

void rename_account(store::Database& db, const std::string& name, const std::string& new_name,
                    Date effective) {
  const Account account = store::account_named(db, name);
  check_identifier("account name", new_name, 200);
  if (new_name == account.name)
    throw InputError(fmt::format("account '{}' has that name already", printable(name)));
  store::update_account_name(db, account.id, new_name);
  store::insert_record_change(
      db, {0, "account", account.id, "name", account.name, new_name, effective});
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
