// Posting: the only way transactions enter the ledger.
//
// A request names accounts and securities as a person types them. post()
// checks its shape (which figures a kind needs, all positive), resolves the
// names, writes the row(s) and replays the whole ledger inside one write
// transaction; if any rule breaks (see ledger/book.h), it throws InputError
// and nothing is written. Every write here checks the period locks
// (ledger/period.h): nothing dated in a reconciled period gets in.
// void_transaction() cancels a posted row (and the other half of a transfer
// pair), or reinstates it by voiding its void, by recording void entries,
// under the same all-or-nothing check.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <unordered_map>
#include <vector>

#include "core/error.h"
#include "ledger/book.h"
#include "ledger/period.h"
#include "model/records.h"
#include "store/database.h"
#include "store/ledger_store.h"

namespace keel::ledger {

struct PostRequest {
  TxnKind kind = TxnKind::deposit;
  Date date;
  std::string account;
  std::optional<std::string> symbol;
  std::optional<Decimal> quantity;
  std::optional<Decimal> price;
  std::optional<Decimal> amount;
  std::optional<Decimal> fee;
  std::optional<Date> acquired;
  std::vector<LotPick> lots;
  std::optional<std::string> to_account;  // transfer_out only: the receiving own account
  std::optional<std::string> ref;
  std::optional<std::string> note;
  std::optional<std::string> row_hash;  // set by importers for rows without ref
  bool allow_future = false;            // accept a date after today
  // Foreign currencies (ledger/fx_cash.h): the currency of the figures (an
  // ISO 4217 code; unset: the security's for a row naming one, else the
  // account's), the settlement or exchange rate, and an exchange's target.
  std::optional<std::string> currency;
  std::optional<Decimal> rate;
  std::optional<std::string> to_currency;
};

// Why `date` may not be posted without an explicit override: "2099-12-31 is
// after today (2026-12-03)"; unset when it is today or earlier. Today is the
// local calendar day (Date::today, which follows TZ). A posting in the future
// is far more often a slip of the keyboard than a trade booked ahead of
// settlement, and year-to-date reports would run to it.
std::optional<std::string> future_date(Date date);
// The flag that overrides it, named in every refusal.
inline constexpr const char* kAllowFutureFlag = "--allow-future-date";

// A request of the wrong shape; field() names the request's field at fault
// ("amount", "quantity"; empty for the row as a whole) and reason() says why
// without naming an option, so an importer can name the file's column instead.
class ShapeError : public InputError {
 public:
  ShapeError(std::string message, std::string field, std::string reason);
  const std::string& field() const { return field_; }
  const std::string& reason() const { return reason_; }

 private:
  std::string field_, reason_;
};

// Throws ShapeError naming the first figure that is missing, extra or not
// positive, or InputError for a date after today without allow_future.
void check_shape(const PostRequest& request);

// Posts one request; returns the ids written (two for an internal transfer).
std::vector<std::int64_t> post(store::Database& db, const PostRequest& request);

// Writes the rows of `requests` without replaying; the caller replays once
// (check_ledger) and commits. For importers that post many rows in one go.
// `locks`: the period locks loaded once by the caller (loaded here if null).
std::vector<std::int64_t> write_unchecked(store::Database& db, const PostRequest& request,
                                          const PeriodLocks* locks = nullptr);

// Writes the void entries cancelling `id` (and the other half of a transfer
// pair) without replaying; returns their ids. Throws InputError for an
// unknown id, a void, an already voided row or a locked period.
std::vector<std::int64_t> write_void_unchecked(store::Database& db, std::int64_t id,
                                               const std::string& reason,
                                               const PeriodLocks* locks = nullptr);

// Replays the whole ledger; throws InputError on the first broken rule.
// `pending`: ids written by the change being checked, with their origin (see LedgerLog).
Book check_ledger(store::Database& db,
                  const std::unordered_map<std::int64_t, std::string>& pending = {});

// Posts many requests in one write transaction with a single replay, for
// importers; `origins[i]` names where requests[i] came from ("file.csv:12").
// All or nothing: the first broken rule throws and nothing is written.
std::vector<std::int64_t> post_batch(store::Database& db, const std::vector<PostRequest>& requests,
                                     const std::vector<std::string>& origins);

// Records a split of `symbol` on `date`; ratio = new units per old unit.
// A date after today is refused unless `allow_future`.
std::int64_t post_split(store::Database& db, const std::string& symbol, Date date,
                        const Decimal& ratio, bool allow_future = false);

// Records a void of row `id` (and of the rows that stand or fall with it:
// the other half of a transfer pair; for a void, the voids of that pair).
// Voiding a transaction takes it out of the books; voiding a void puts what
// it had cancelled back (voided_ids() in ledger/book.h). Refuses a row that
// already has a void, saying which void to void instead. Same all-or-nothing
// check as post().
struct VoidResult {
  std::vector<std::int64_t> void_ids;   // the void entries written
  std::vector<Transaction> cancelled;   // transactions now out of the books
  std::vector<Transaction> reinstated;  // transactions back in the books
};
VoidResult void_transaction(store::Database& db, std::int64_t id, const std::string& reason);

// Loads accounts, transactions, splits and exchange rates. `fields`:
// store::TxnFields::replay for a caller that reads no transaction's ref,
// row hash or note (they are then left unset).
LedgerLog load_log(store::Database& db, store::TxnFields fields = store::TxnFields::all);

// Refuses `rate` for base/quote on `day` when it is nearer the inverse of the
// stored rate than the rate itself (a rate given the wrong way round); the
// message shows both directions. Says nothing when no rate is stored.
void check_direction(store::Database& db, std::string_view what, const std::string& base,
                     const std::string& quote, const Decimal& rate, Date day);

}  // namespace keel::ledger
