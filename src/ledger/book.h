// Book: what every account holds, derived by replaying the transaction log.
//
// The ledger stores only transactions and splits; positions, lots, cash and
// realized gains are always recomputed from them, so there is nothing cached
// that could drift. Replay order is (date, id); splits and then corporate
// actions (ledger/actions.h) apply at the start of their day, before that
// day's transactions.
//
// Rules enforced while replaying (each violation throws InputError naming the
// transaction, account, day and figures):
//  - no sell or transfer out of more units than are held (no short positions);
//  - specific-lot picks name open lots of that position and add up exactly;
//  - an account that does not allow negative cash ends no day below zero.
//
// Lots: every buy (and every security transfer in from outside) opens a lot
// whose id is that transaction's id and whose cost includes the fee. Closing
// part of a lot splits its cost by quantity with allocate() (largest
// remainder, to the cent: kCostPlaces), so neither part is ever negative or
// above the lot's cost and total cost is conserved exactly. A sell's proceeds
// (net of its fee) are shared among the lots it closes the same way. Splits
// multiply quantities and keep total cost.
//
// Foreign currencies (ledger/fx_cash.h says how): an account keeps cash in
// its own currency (`cash`) and in any others (`foreign_cash`, as lots
// carried at their cost in the account's currency, taken on the account's
// lot method). A lot of a security in another currency carries its cost in
// both currencies, fixed at purchase; a sale's gain in the account's
// currency splits into a price part and a currency part; spending foreign
// cash realizes its currency gain (FxRealized). Rates are the day's, asked of
// the log's market::View; a missing one throws InputError naming the pair
// and the day.
//
// Transfers of units are recorded as MovedCost entries: the cost basis that
// left an account (transfer out) or arrived in one (transfer in: the carried
// lots' cost for the receiving half of an internal pair, quantity x price for
// units from outside), so reports can account for every change in cost.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <unordered_map>
#include <unordered_set>
#include <utility>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "market/view.h"
#include "model/records.h"

namespace keel {

inline constexpr int kCostPlaces = 2;

struct Lot {
  std::int64_t lot_id = 0;  // id of the transaction that opened it
  Date acquired;            // start of the holding period
  Decimal quantity;
  Decimal cost;  // total cost basis of this lot, fee included
  // The cost in the security's currency when that is not the account's
  // (fixed at purchase, like `cost`); unset: the same as `cost`.
  std::optional<Decimal> local_cost = std::nullopt;
};

struct RealizedPart {
  std::int64_t account_id = 0;
  std::int64_t security_id = 0;
  std::int64_t lot_id = 0;
  std::int64_t sell_txn_id = 0;
  Date acquired;
  Date disposed;
  Decimal quantity;
  Decimal proceeds;  // net of the sell's fee, allocated by quantity
  Decimal cost;
  std::int64_t action_id = 0;  // the corporate action that disposed of it (sell_txn_id is 0)
  Decimal gain() const { return proceeds - cost; }
  // A security in another currency: proceeds and cost in that currency, and
  // the part of gain() that the price made (see docs/methods-ledger.md).
  std::optional<Decimal> local_proceeds = std::nullopt;
  std::optional<Decimal> local_cost = std::nullopt;
  std::optional<Decimal> price_gain = std::nullopt;
  Decimal price_part() const { return price_gain.value_or(gain()); }
  Decimal currency_part() const { return gain() - price_part(); }
};

// Foreign cash spent, withdrawn or exchanged: its gain in the account's
// currency between the day it was acquired and the day it left.
struct FxRealized {
  std::int64_t account_id = 0;
  std::int64_t txn_id = 0;
  std::string currency;
  Date acquired;
  Date disposed;
  Decimal quantity;  // units of `currency`
  Decimal proceeds;  // in the account's currency
  Decimal cost;      // in the account's currency
  Decimal gain() const { return proceeds - cost; }
};

struct MovedCost {
  std::int64_t txn_id = 0;
  std::int64_t account_id = 0;
  std::int64_t security_id = 0;
  Date date;
  bool incoming = false;  // transfer in; false for a transfer out
  Decimal cost;           // cost basis that moved with the units
};

struct Position {
  std::vector<Lot> lots;  // open lots, oldest first
  Decimal quantity() const;
  Decimal cost() const;
};

struct AccountBook {
  Decimal cash;                                // in the account's own currency
  std::map<std::int64_t, Position> positions;  // by security id; only open positions
  // Cash in other currencies, as lots: quantity in that currency, cost in
  // the account's. Only currencies with a balance are kept.
  std::map<std::string, std::vector<Lot>> foreign_cash;
  Decimal foreign_balance(const std::string& currency) const;
};

class Book {
 public:
  explicit Book(const std::vector<Account>& accounts,
                std::unordered_map<std::int64_t, std::string> pending = {},
                std::shared_ptr<const market::View> rates = nullptr);

  void apply_split(const Split& split);
  void apply_action(const CorporateAction& action);  // ledger/actions.h
  void apply(const Transaction& txn);
  // Checks end-of-day rules (cash) for every account touched on `day`.
  void close_day(Date day);

  const AccountBook& account(std::int64_t account_id) const;
  const Account& account_info(std::int64_t account_id) const;
  const std::vector<Account>& accounts() const { return accounts_; }
  const std::vector<RealizedPart>& realized() const { return realized_; }
  // Room for `parts` realized parts, a hint only: a long history then does
  // not copy itself each time it outgrows its storage.
  void reserve_realized(std::size_t parts) { realized_.reserve(parts); }
  const std::vector<MovedCost>& moved() const { return moved_; }  // in replay order
  const std::vector<FxRealized>& fx_realized() const { return fx_realized_; }
  // Foreign cash moved by a transfer (security_id 0): the cost of its lots in
  // the account's currency, as they left or arrived; in replay order.
  const std::vector<MovedCost>& fx_cash_moved() const { return fx_cash_moved_; }
  // The latest unit price the ledger traded `security_id` at, in any account
  // (split-adjusted), and the day of that trade; unset if it never traded.
  struct TradePrice {
    Date day;
    Decimal price;
  };
  std::optional<TradePrice> last_trade(std::int64_t security_id) const;
  std::optional<Decimal> last_trade_price(std::int64_t security_id) const;
  // A copy of what is held: accounts, cash, positions and their lots, foreign
  // cash, lots in transit and last trades, replaying on from here as this
  // book would. The history lists stay behind: realized(), moved(),
  // fx_realized() and fx_cash_moved() of the copy are empty. Holdings at a
  // past day, without copying every part realized before it.
  Book holdings_copy() const;

 private:
  friend class ActionEngine;
  AccountBook& book_of(std::int64_t account_id);
  std::vector<Lot> take_lots(const Transaction& txn, const Account& account, Position& position);
  void apply_buy(const Transaction& txn, AccountBook& book);
  void apply_sell(const Transaction& txn, const Account& account, AccountBook& book);
  void apply_transfer_in(const Transaction& txn, AccountBook& book);
  void apply_transfer_out(const Transaction& txn, const Account& account, AccountBook& book);

  std::vector<Account> accounts_;
  std::unordered_map<std::int64_t, std::size_t> index_;
  std::vector<AccountBook> books_;
  std::vector<RealizedPart> realized_;
  std::vector<MovedCost> moved_;
  std::vector<MovedCost> fx_cash_moved_;
  std::vector<FxRealized> fx_realized_;
  std::shared_ptr<const market::View> rates_;

  // Rows in another currency than the account's, and exchanges
  // (ledger/fx_cash.cpp). apply_foreign() returns false for a row it leaves
  // to the account-currency path.
  bool apply_foreign(const Transaction& txn, const Account& account, AccountBook& book);
  void apply_exchange(const Transaction& txn, const Account& account, AccountBook& book);
  void apply_foreign_sell(const Transaction& txn, const Account& account, AccountBook& book,
                          const std::string& currency);
  Decimal at_day_rate(const Decimal& amount, const std::string& from, const std::string& to,
                      const Transaction& txn) const;
  void add_foreign_cash(AccountBook& book, const std::string& currency, const Decimal& quantity,
                        const Decimal& cost, const Transaction& txn);
  void spend_foreign_cash(AccountBook& book, const Account& account, const std::string& currency,
                          const Decimal& quantity, const Decimal& proceeds, const Transaction& txn);
  std::unordered_map<std::int64_t, TradePrice> last_trade_;
  std::unordered_map<std::int64_t, std::vector<Lot>> in_transit_;  // by transfer_out id
  std::unordered_set<std::int64_t> touched_today_;
  std::unordered_map<std::int64_t, const Transaction*> last_txn_today_;
  std::unordered_map<std::int64_t, std::string> pending_;
  std::string describe(const Transaction& txn) const;
};

// Splits `total` into parts proportional to `weights` (none negative, not all
// zero) by the largest-remainder method: each part's exact quota is floored to
// `places` digits, the units of 10^-places still missing go one each to the
// parts whose quotas lost most to the floor (ties: the earlier part), and a
// rest below one unit (when `total` has more digits than `places`) goes to
// the last part with weight. Every part lies between zero and `total`, has
// its sign, and the parts add up to `total` exactly. Throws
// std::invalid_argument on a negative weight or all-zero weights.
std::vector<Decimal> allocate(const Decimal& total, const std::vector<Decimal>& weights,
                              int places);
// The share of a lot's `cost` that goes with `taken` of its `held` units:
// allocate(cost, {taken, held - taken}, kCostPlaces), all of it when every unit goes.
Decimal cost_share(const Decimal& cost, const Decimal& taken, const Decimal& held);

// Lot-taking helpers shared with the action engine: the order in which a
// method takes lots (`lots` untouched), cutting `quantity` off a lot with its
// share of cost, and dropping lots left empty.
std::vector<std::size_t> taking_order(const std::vector<Lot>& lots, BasisMethod method);
Lot cut(Lot& lot, const Decimal& quantity);
void drop_empty(std::vector<Lot>& lots);

struct LedgerLog {
  std::vector<Account> accounts;
  std::vector<Transaction> transactions;  // any order; voids included
  std::vector<Split> splits;
  std::vector<CorporateAction> actions;  // any order; voids included
  // Ids written by the current, uncommitted change, each with where it came
  // from ("broker.csv:12"; empty for a single command). Errors name them so,
  // not by an id that will not exist once the change is rolled back.
  std::unordered_map<std::int64_t, std::string> pending;
  // The market view that answers exchange rates for foreign-currency rows
  // (it borrows the ledger's Database); unset: none can be asked.
  std::shared_ptr<const market::View> rates;
};

// Called after the last transaction of each day that has one (and each split
// or corporate action day), with the book as it stands at that day's close.
using DayObserver = std::function<void(Date day, const Book& book)>;

// Steps through the log day by day: advance_to(d) applies every split and
// transaction dated on or before d not yet applied, closing each day in turn.
// The log must outlive the Replayer. Throws as Book::apply does.
class Replayer {
 public:
  explicit Replayer(const LedgerLog& log);
  const Book& advance_to(Date day, const DayObserver& observer = {});
  const Book& finish(const DayObserver& observer = {});  // everything
  const Book& book() const { return book_; }
  // The book as it stands, moved out rather than copied; nothing may be
  // asked of the Replayer afterwards.
  Book release() && { return std::move(book_); }
  // The live (not voided) transactions, in posting order.
  const std::vector<const Transaction*>& live() const { return live_; }

 private:
  void close_open_day(const DayObserver& observer);
  std::vector<const Transaction*> live_;
  std::vector<const Split*> splits_;
  std::vector<const CorporateAction*> actions_;
  Book book_;
  std::size_t next_txn_ = 0;
  std::size_t next_split_ = 0;
  std::size_t next_action_ = 0;
  std::optional<Date> open_day_;
};

// Replays every transaction, split and corporate action dated on or before `until` (all, when
// unset), skipping voided transactions and the voids themselves.
Book replay(const LedgerLog& log, std::optional<Date> until = std::nullopt,
            const DayObserver& observer = {});

// Ids of the rows of `transactions` that a void in force cancels. A void is
// in force unless it is itself cancelled: voiding a void reinstates what it
// had cancelled, and voiding that void cancels it again. Voids that are
// cancelled are in the set too.
std::unordered_set<std::int64_t> voided_ids(const std::vector<Transaction>& transactions);

}  // namespace keel
