// Store functions for accounts, securities, transactions and splits.
//
// Every SQL statement of the ledger lives here, with bound parameters only.
// Lookups by name throw InputError naming what was asked for (and, where it
// helps, what exists); inserts that break a uniqueness rule throw InputError
// saying which. Callers wrap writes in a WriteTransaction.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "model/records.h"
#include "model/security.h"
#include "store/database.h"

namespace keel::store {

// The ledger's own currency (schema version 3), unset until recorded.
std::optional<std::string> ledger_currency(Database& db);
// Records it; throws InputError if another one is recorded already.
void set_ledger_currency(Database& db, const std::string& currency);

std::int64_t insert_account(Database& db, const Account& account);
std::optional<Account> find_account(Database& db, std::string_view name);
Account account_named(Database& db, std::string_view name);
std::vector<Account> list_accounts(Database& db);

// A dated tax status; throws InputError when the account already has a
// status recorded from that very day.
void insert_tax_status(Database& db, const TaxStatusChange& change);
std::vector<TaxStatusChange> list_tax_statuses(Database& db);  // by account id, then day

std::int64_t insert_security(Database& db, const Security& security);
std::optional<Security> find_security(Database& db, std::string_view symbol);
Security security_with_symbol(Database& db, std::string_view symbol);
std::vector<Security> list_securities(Database& db);

std::int64_t insert_transaction(Database& db, const Transaction& txn);
std::optional<Transaction> find_transaction(Database& db, std::int64_t id);
// What a read of the transactions fills in.
enum class TxnFields {
  all,     // every field
  replay,  // all but the descriptive texts ref, row_hash and note, left unset:
           // what the lot engine and the reports built on its replay read
};
// Every row, voids included, in posting order (date, then id), as one state
// of the ledger (a read transaction). A correction's replacement row carries
// the ref it corrects.
std::vector<Transaction> list_transactions(Database& db, TxnFields fields = TxnFields::all);
// Whether the replay's read finds the rows with an optional field set
// (acquired, lots, link, void, currency, rate, currency bought) through the
// partial index of schema version 13, as its query is written to, rather
// than by testing every row.
bool optional_fields_indexed(Database& db);
bool ref_exists(Database& db, std::int64_t account_id, std::string_view ref);
bool row_hash_exists(Database& db, std::int64_t account_id, std::string_view row_hash);
std::optional<std::int64_t> void_of(Database& db, std::int64_t txn_id);
// Highest transaction id, 0 for an empty ledger.
std::int64_t last_transaction_id(Database& db);

std::int64_t insert_split(Database& db, const Split& split);
std::vector<Split> list_splits(Database& db);  // by date, then id

// "did you mean 'QRX'?" for a name not among `known`: the one that differs
// only in ASCII letter case (said so), else the nearest by core/suggest.h;
// unset when nothing is close.
std::optional<std::string> nearest_names(std::string_view name,
                                         const std::vector<std::string>& known);

// The current UTC time as ISO 8601, for recorded_at columns.
std::string utc_timestamp();

}  // namespace keel::store
