#include "ledger/fx_cash.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/currency.h"
#include "core/error.h"
#include "core/text.h"
#include "ledger/book.h"

namespace keel {

namespace ledger {

Decimal settle(const Decimal& amount, const Decimal& rate, const std::string& account_currency) {
  return Decimal::divide(amount, rate, minor_units(account_currency));
}

Decimal exchanged(const Decimal& amount, const Decimal& rate, const std::string& to_currency) {
  return round_money(amount * rate, to_currency);
}

BookedAmount booked_amount(const Decimal& amount, const std::string& currency,
                           const std::optional<Decimal>& rate, const std::string& account_currency,
                           Date day, const market::View& view) {
  if (currency == account_currency) return {amount, std::nullopt, std::nullopt};
  if (rate) return {settle(amount, *rate, account_currency), rate, std::nullopt};
  return {view.convert(amount, currency, account_currency, day), std::nullopt,
          view.rate(account_currency, currency, day)};
}

}  // namespace ledger

Decimal Book::at_day_rate(const Decimal& amount, const std::string& from, const std::string& to,
                          const Transaction& txn) const {
  if (!rates_)
    throw InputError(fmt::format(
        "{}: no exchange rate for {}/{} on or before {}; import rates with 'keel import fx "
        "FILE.csv' or give the rate on the row",
        describe(txn), to, from, txn.date.str()));
  try {
    return rates_->convert(amount, from, to, txn.date);
  } catch (const InputError& e) {
    throw InputError(fmt::format("{}: {}", describe(txn), e.what()));
  }
}

void Book::add_foreign_cash(AccountBook& book, const std::string& currency, const Decimal& quantity,
                            const Decimal& cost, const Transaction& txn) {
  book.foreign_cash[currency].push_back(Lot{txn.id, txn.date, quantity, cost, std::nullopt});
}

void Book::spend_foreign_cash(AccountBook& book, const Account& account,
                              const std::string& currency, const Decimal& quantity,
                              const Decimal& proceeds, const Transaction& txn) {
  const Decimal held = book.foreign_balance(currency);
  if (quantity > held)
    throw InputError(fmt::format(
        "{}: needs {} {} of cash in {}, but '{}' holds {} {}; cash in one currency does not pay "
        "for another: exchange it first, or give the broker's settlement rate",
        describe(txn), quantity.str(), currency, currency, printable(account.name), held.str(),
        currency));
  // Cash has no lot ids to name: a specific-lot account takes it oldest first.
  Account method = account;
  if (method.basis == BasisMethod::specific) method.basis = BasisMethod::fifo;
  Transaction take = txn;
  take.quantity = quantity;
  take.lots.clear();
  Position pool{std::move(book.foreign_cash[currency])};
  const auto taken = take_lots(take, method, pool);
  if (pool.lots.empty())
    book.foreign_cash.erase(currency);
  else
    book.foreign_cash[currency] = std::move(pool.lots);
  std::vector<Decimal> quantities;
  for (const auto& lot : taken) quantities.push_back(lot.quantity);
  const auto parts = allocate(proceeds, quantities, kCostPlaces);
  for (std::size_t i = 0; i < taken.size(); ++i)
    fx_realized_.push_back(FxRealized{txn.account_id, txn.id, currency, taken[i].acquired, txn.date,
                                      taken[i].quantity, parts[i], taken[i].cost});
}

void Book::apply_exchange(const Transaction& txn, const Account& account, AccountBook& book) {
  const std::string& own = account.currency;
  const std::string from = txn.currency.value_or(own);
  const std::string to = *txn.to_currency;
  const Decimal sold = *txn.amount;
  const Decimal bought = ledger::exchanged(sold, *txn.rate, to);
  // The exchange's worth in the account's currency.
  const Decimal worth = to == own     ? bought
                        : from == own ? sold + txn.fee
                                      : at_day_rate(sold, from, own, txn);
  if (from == own)
    book.cash -= sold + txn.fee;
  else
    spend_foreign_cash(book, account, from, sold + txn.fee, worth, txn);
  if (to == own)
    book.cash += bought;
  else
    add_foreign_cash(book, to, bought, worth, txn);
}

void Book::apply_foreign_sell(const Transaction& txn, const Account& account, AccountBook& book,
                              const std::string& currency) {
  const std::string& own = account.currency;
  auto& position = book.positions[*txn.security_id];
  const auto taken = take_lots(txn, account, position);
  const Decimal local = *txn.quantity * *txn.price - txn.fee;
  auto to_own = [&](const Decimal& x) {
    return txn.rate ? ledger::settle(x, *txn.rate, own) : at_day_rate(x, currency, own, txn);
  };
  const Decimal proceeds = to_own(local);
  std::vector<Decimal> quantities;
  for (const auto& lot : taken) quantities.push_back(lot.quantity);
  const auto parts = allocate(proceeds, quantities, kCostPlaces);
  const auto local_parts = allocate(local, quantities, kCostPlaces);
  for (std::size_t i = 0; i < taken.size(); ++i) {
    RealizedPart part{txn.account_id,    *txn.security_id, taken[i].lot_id,   txn.id,
                      taken[i].acquired, txn.date,         taken[i].quantity, parts[i],
                      taken[i].cost};
    const Decimal local_cost = taken[i].local_cost.value_or(taken[i].cost);
    part.local_proceeds = local_parts[i];
    part.local_cost = local_cost;
    part.price_gain = to_own(local_parts[i] - local_cost);
    realized_.push_back(part);
  }
  last_trade_[*txn.security_id] = TradePrice{txn.date, *txn.price};
  if (position.lots.empty()) book.positions.erase(*txn.security_id);
  if (txn.rate)
    book.cash += proceeds;
  else
    add_foreign_cash(book, currency, local, proceeds, txn);
}

bool Book::apply_foreign(const Transaction& txn, const Account& account, AccountBook& book) {
  if (txn.kind == TxnKind::exchange) {
    apply_exchange(txn, account, book);
    return true;
  }
  const std::string& own = account.currency;
  if (!txn.currency || *txn.currency == own) return false;
  const std::string& c = *txn.currency;
  auto to_own = [&](const Decimal& x) {
    return txn.rate ? ledger::settle(x, *txn.rate, own) : at_day_rate(x, c, own, txn);
  };
  // Short of the foreign cash a row spends: say so before looking for a
  // rate (spend_foreign_cash refuses before it changes anything).
  auto short_of = [&](const Decimal& needed) {
    if (!txn.rate && needed > book.foreign_balance(c))
      spend_foreign_cash(book, account, c, needed, Decimal(), txn);
  };
  switch (txn.kind) {
    case TxnKind::deposit:
      add_foreign_cash(book, c, *txn.amount, to_own(*txn.amount), txn);
      break;
    case TxnKind::dividend:
    case TxnKind::interest:
      if (txn.rate)
        book.cash += to_own(*txn.amount);
      else
        add_foreign_cash(book, c, *txn.amount, to_own(*txn.amount), txn);
      break;
    case TxnKind::withdrawal:
    case TxnKind::fee:
    case TxnKind::tax:
      short_of(*txn.amount);
      if (txn.rate)
        book.cash -= to_own(*txn.amount);
      else
        spend_foreign_cash(book, account, c, *txn.amount, to_own(*txn.amount), txn);
      break;
    case TxnKind::buy: {
      const Decimal local = *txn.quantity * *txn.price + txn.fee;
      short_of(local);
      const Decimal cost = to_own(local);
      if (txn.rate)
        book.cash -= cost;
      else
        spend_foreign_cash(book, account, c, local, cost, txn);
      book.positions[*txn.security_id].lots.push_back(
          Lot{txn.id, txn.date, *txn.quantity, cost, local});
      last_trade_[*txn.security_id] = TradePrice{txn.date, *txn.price};
      break;
    }
    case TxnKind::sell:
      apply_foreign_sell(txn, account, book, c);
      break;
    case TxnKind::transfer_out:
      if (txn.security_id) return false;  // units keep their lots; the fee is refused in posting
      {
        Position pool{std::move(book.foreign_cash[c])};
        const Decimal held = pool.quantity();
        if (*txn.amount > held)
          throw InputError(fmt::format("{}: cannot move {} {}; '{}' holds {} {}", describe(txn),
                                       txn.amount->str(), c, printable(account.name), held.str(),
                                       c));
        Account method = account;
        if (method.basis == BasisMethod::specific) method.basis = BasisMethod::fifo;
        Transaction take = txn;
        take.quantity = *txn.amount;
        take.lots.clear();
        in_transit_[txn.id] = take_lots(take, method, pool);
        Decimal cost;
        for (const auto& lot : in_transit_[txn.id]) cost += lot.cost;
        fx_cash_moved_.push_back(MovedCost{txn.id, txn.account_id, 0, txn.date, false, cost});
        if (pool.lots.empty())
          book.foreign_cash.erase(c);
        else
          book.foreign_cash[c] = std::move(pool.lots);
      }
      break;
    case TxnKind::transfer_in:
      if (txn.security_id) {
        if (txn.link_id) return false;  // the lots arrive with both costs
        const Decimal local = *txn.quantity * txn.price.value_or(Decimal());
        book.positions[*txn.security_id].lots.push_back(
            Lot{txn.id, txn.acquired.value_or(txn.date), *txn.quantity, to_own(local), local});
        if (txn.price) last_trade_[*txn.security_id] = TradePrice{txn.date, *txn.price};
        moved_.push_back(MovedCost{txn.id, txn.account_id, *txn.security_id, txn.date, true,
                                   book.positions[*txn.security_id].lots.back().cost});
        break;
      }
      if (txn.link_id) {
        auto it = in_transit_.find(*txn.link_id);
        if (it == in_transit_.end())
          throw InputError(fmt::format("transaction {}: its transfer out {} was not found", txn.id,
                                       *txn.link_id));
        // Same account currency on both sides (posting checks): lots keep their cost.
        Decimal cost;
        for (auto& lot : it->second) {
          cost += lot.cost;
          book.foreign_cash[c].push_back(std::move(lot));
        }
        in_transit_.erase(it);
        fx_cash_moved_.push_back(MovedCost{txn.id, txn.account_id, 0, txn.date, true, cost});
      } else {
        const Decimal cost = to_own(*txn.amount);
        add_foreign_cash(book, c, *txn.amount, cost, txn);
        fx_cash_moved_.push_back(MovedCost{txn.id, txn.account_id, 0, txn.date, true, cost});
      }
      break;
    case TxnKind::exchange:
    case TxnKind::void_entry:
      break;
  }
  return true;
}

}  // namespace keel
