// The ledger's records: accounts, transactions, splits and corporate actions,
// as plain values.
//
// All quantities and amounts are positive exact decimals; the kind gives the
// direction. Figures are in the transaction's currency (the account's unless
// it names another). A Transaction mirrors one row of the append-only txn table.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"

namespace keel {

enum class BasisMethod { fifo, lifo, hifo, average, specific };
std::string_view to_string(BasisMethod method);
BasisMethod parse_basis_method(std::string_view text);  // throws InputError naming the choices

enum class TxnKind {
  deposit,
  withdrawal,
  buy,
  sell,
  dividend,
  interest,
  tax,
  fee,
  transfer_in,
  transfer_out,
  exchange,    // cash of one currency into another inside an account
  void_entry,  // stored as "void"
};
std::string_view to_string(TxnKind kind);
TxnKind parse_txn_kind(std::string_view text);  // throws InputError naming the choices
// Kinds whose only figure is a cash amount.
bool is_cash_kind(TxnKind kind);

// How an account's gains and income are taxed, as a fact of the account (the
// rules themselves are local; keel only keeps the status apart).
enum class TaxStatus { taxable, tax_deferred, tax_exempt };
std::string_view to_string(TaxStatus status);       // "taxable", "tax-deferred", "tax-exempt"
TaxStatus parse_tax_status(std::string_view text);  // throws InputError naming the choices

struct Account {
  std::int64_t id = 0;
  std::string name;
  std::string currency;  // ISO 4217 code; empty: the ledger's (ledger::add_account)
  BasisMethod basis = BasisMethod::fifo;
  bool allow_negative_cash = false;
};

// One lot taken by a specific-lot sell: the lot's id and how much of it.
struct LotPick {
  std::int64_t lot_id = 0;
  Decimal quantity;
};
// "12:5,14:2.5" -> picks; throws InputError on bad shape.
std::vector<LotPick> parse_lot_picks(std::string_view text);
std::string format_lot_picks(const std::vector<LotPick>& picks);

struct Transaction {
  std::int64_t id = 0;
  std::int64_t account_id = 0;
  Date date;
  TxnKind kind = TxnKind::deposit;
  std::optional<std::int64_t> security_id;
  std::optional<Decimal> quantity;
  std::optional<Decimal> price;
  std::optional<Decimal> amount;
  Decimal fee;
  std::optional<Date> acquired;  // holding period start for a security brought in from outside
  std::vector<LotPick> lots;     // specific lots for a sell or transfer out
  std::optional<std::int64_t> link_id;   // other half of an internal transfer
  std::optional<std::int64_t> voids_id;  // for kind void_entry
  std::optional<std::string> ref;
  std::optional<std::string> row_hash;
  std::optional<std::string> note;
  // The currency of price, amount and fee; unset: the account's own.
  std::optional<std::string> currency;
  // A foreign-currency row settled in the account's own cash: how many
  // `currency` units one account-currency unit bought. An exchange: how many
  // `to_currency` units one `currency` unit bought.
  std::optional<Decimal> rate;
  std::optional<std::string> to_currency;  // an exchange: the currency bought
};

// A corporate action: what happens to a security, recorded once and applied
// to every account's lots at the start of its day (ledger/actions.h says what
// each kind does to a lot). Figures are positive exact decimals; which ones a
// kind uses is checked by ledger::check_action_shape.
enum class ActionKind {
  split,              // ratio; fractions paid at in_lieu when set
  merger,             // into target: ratio units and/or cash per unit
  spinoff,            // ratio units of target; cost_percent of cost goes to them
  return_of_capital,  // cash per unit lowers each lot's cost
  stock_dividend,     // ratio new units per unit held, of the same security
  delisting,          // trading ends: every lot disposed of at cash per unit (may be 0)
  void_entry,         // stored as "void": cancels the action voids_id names
};
std::string_view to_string(ActionKind kind);
ActionKind parse_action_kind(std::string_view text);  // throws InputError naming the choices

struct CorporateAction {
  std::int64_t id = 0;
  std::int64_t security_id = 0;
  Date date;
  ActionKind kind = ActionKind::split;
  std::optional<std::int64_t> target_id;  // merger: the acquirer; spin-off: the new security
  std::optional<Decimal> ratio;           // units received per unit held
  std::optional<Decimal> cash;            // cash per unit held
  std::optional<Decimal> cost_percent;    // share of cost going to the units received, 0-100
  std::optional<Decimal> in_lieu;         // price per fractional unit paid in cash
  std::optional<std::int64_t> voids_id;
  std::optional<std::string> note;
};

// The actions in force (not voided, not voids), ordered by date then id.
std::vector<const CorporateAction*> live_actions(const std::vector<CorporateAction>& all);

// An account's tax status from `from` on, until its next change.
struct TaxStatusChange {
  std::int64_t account_id = 0;
  Date from;
  TaxStatus status = TaxStatus::taxable;
};

struct Split {
  std::int64_t id = 0;
  std::int64_t security_id = 0;
  Date date;
  Decimal ratio;  // new units per old unit: 2 = two-for-one, 0.1 = one-for-ten
};

}  // namespace keel
