#include "ledger/book.h"

#include <fmt/format.h>

#include <algorithm>
#include <limits>
#include <optional>
#include <stdexcept>

#include "core/error.h"
#include "core/text.h"
#include "ledger/actions.h"
#include "ledger/allocation.h"

namespace keel {

namespace {

__extension__ typedef __int128 Wide;  // GCC and Clang; -Wpedantic wants the marker

// The exact sum of one member of every lot. While each value is a machine
// word the sum is kept as one 128-bit integer at the largest scale met and
// turned into a Decimal once; anything else (a value too long, a sum or a
// shift that would overflow) is added up as Decimals. Either way the result
// is the same exact, normalized Decimal.
template <typename Member>
Decimal sum_of(const std::vector<Lot>& lots, Member member) {
  constexpr Wide kWord = std::numeric_limits<long long>::max();
  Wide sum = 0;
  int scale = 0;
  auto shift = [](Wide& v, int digits) {
    for (; digits > 0; --digits)
      if (__builtin_mul_overflow(v, Wide(10), &v)) return false;
    return true;
  };
  for (const auto& lot : lots) {
    const Decimal& d = lot.*member;
    const auto m = d.machine_mantissa();
    Wide v = m ? Wide(*m) : 0;
    if (!m || (d.scale() > scale && !shift(sum, d.scale() - scale)) ||
        (d.scale() < scale && !shift(v, scale - d.scale())) ||
        __builtin_add_overflow(sum, v, &sum)) {
      Decimal total;
      for (const auto& l : lots) total += l.*member;
      return total;
    }
    scale = std::max(scale, d.scale());
  }
  if (sum < -kWord || sum > kWord || scale > Decimal::kMaxScale) {
    Decimal total;
    for (const auto& l : lots) total += l.*member;
    return total;
  }
  return Decimal::scaled(static_cast<long long>(sum), scale);
}

}  // namespace

Decimal Position::quantity() const {
  return sum_of(lots, &Lot::quantity);
}

Decimal Position::cost() const {
  return sum_of(lots, &Lot::cost);
}

namespace {

__extension__ typedef __int128 Wide;  // GCC and Clang; -Wpedantic wants the marker

constexpr Wide kWordMax = std::numeric_limits<long long>::max();

// `d` as mantissa x 10^-scale when the mantissa has at most 18 digits.
std::optional<long long> small_mantissa(const Decimal& d) {
  constexpr long long kLimit = 1'000'000'000'000'000'000;  // 10^18: at most 18 digits
  const auto m = d.machine_mantissa();
  if (!m || *m <= -kLimit || *m >= kLimit) return std::nullopt;
  return m;
}

// The parts' indices by what their quotas lost to the floor, most first
// (ties: the earlier part): the order in which the units left over go.
template <typename Remainder>
std::vector<std::size_t> by_remainder(const std::vector<Remainder>& remainder) {
  std::vector<std::size_t> order(remainder.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return remainder[a] > remainder[b]; });
  return order;
}

// What lies below the grid stays with the last part that has weight; every
// part takes the sign of the total.
void finish_parts(std::vector<Decimal>& parts, const std::vector<Decimal>& weights,
                  const Decimal& below_grid, const Decimal& total) {
  std::size_t last = weights.size() - 1;
  while (weights[last].is_zero()) --last;
  parts[last] += below_grid;
  if (total.is_negative())
    for (auto& p : parts) p = -p;
}

// 10^n as a Wide, for 0 <= n <= 36.
Wide power_of_ten(int n) {
  Wide p = 1;
  while (n-- > 0) p *= 10;
  return p;
}

}  // namespace

// Every product is at most (units on the grid) x (one weight) < 2^126, so
// nothing overflows.
std::optional<std::vector<Decimal>> allocate_in_integers(const Decimal& total,
                                                         const std::vector<Decimal>& weights,
                                                         int places) {
  const auto total_mantissa = small_mantissa(total);
  if (!total_mantissa || places < 0 || places > Decimal::kMaxScale) return std::nullopt;
  int weight_scale = 0;
  std::vector<long long> mantissas;
  mantissas.reserve(weights.size());
  for (const auto& w : weights) {
    const auto m = small_mantissa(w);
    if (!m) return std::nullopt;
    mantissas.push_back(*m);
    weight_scale = std::max(weight_scale, w.scale());
  }
  std::vector<Wide> w(weights.size());
  Wide weight_sum = 0;
  for (std::size_t i = 0; i < weights.size(); ++i) {
    const int shift = weight_scale - weights[i].scale();
    if (shift > 18) return std::nullopt;
    w[i] = static_cast<Wide>(mantissas[i]) * power_of_ten(shift);
    if (w[i] > kWordMax) return std::nullopt;
    weight_sum += w[i];
  }
  // The magnitude in whole units of 10^-places, and what lies below them.
  const Wide magnitude = *total_mantissa < 0 ? -static_cast<Wide>(*total_mantissa)
                                             : static_cast<Wide>(*total_mantissa);
  Wide units = 0;
  Decimal below_grid;
  if (total.scale() <= places) {
    if (places - total.scale() > 18) return std::nullopt;
    units = magnitude * power_of_ten(places - total.scale());
  } else {
    const Wide step = power_of_ten(total.scale() - places);
    units = magnitude / step;
    below_grid = Decimal::scaled(static_cast<long long>(magnitude % step), total.scale());
  }
  if (units > kWordMax) return std::nullopt;

  std::vector<Wide> count(weights.size()), remainder(weights.size());
  Wide assigned = 0;
  for (std::size_t i = 0; i < weights.size(); ++i) {
    const Wide quota_times_w = units * w[i];
    count[i] = quota_times_w / weight_sum;  // the quota floored to the grid
    remainder[i] = quota_times_w - count[i] * weight_sum;
    assigned += count[i];
  }
  const auto order = by_remainder(remainder);
  for (std::size_t k = 0; assigned < units && k < order.size(); ++k) {
    ++count[order[k]];
    ++assigned;
  }
  std::vector<Decimal> parts(weights.size());
  for (std::size_t i = 0; i < parts.size(); ++i)
    parts[i] = Decimal::scaled(static_cast<long long>(count[i]), places);
  finish_parts(parts, weights, below_grid, total);
  return parts;
}

namespace {

// Checks the weights as allocate() promises; false when there are none.
bool check_weights(const std::vector<Decimal>& weights) {
  Decimal weight_sum;
  for (const auto& w : weights) {
    if (w.is_negative()) throw std::invalid_argument("allocate: a weight is negative");
    weight_sum += w;
  }
  if (weights.empty()) return false;
  if (!weight_sum.is_positive()) throw std::invalid_argument("allocate: the weights are all zero");
  return true;
}

}  // namespace

std::vector<Decimal> allocate(const Decimal& total, const std::vector<Decimal>& weights,
                              int places) {
  if (!check_weights(weights)) return {};
  if (weights.size() == 1) return {total};
  if (auto parts = allocate_in_integers(total, weights, places)) return std::move(*parts);
  return allocate_in_decimals(total, weights, places);
}

std::vector<Decimal> allocate_in_decimals(const Decimal& total, const std::vector<Decimal>& weights,
                                          int places) {
  std::vector<Decimal> parts(weights.size());
  if (!check_weights(weights)) return parts;
  Decimal weight_sum;
  for (const auto& w : weights) weight_sum += w;
  // One part takes the whole total: the general steps below give it exactly
  // that (its quota is the grid part, the rest lies below the grid), only slower.
  if (weights.size() == 1) {
    parts.front() = total;
    return parts;
  }

  // Work on the magnitude; every part takes the sign of the total.
  const Decimal magnitude = total.abs();
  const Decimal on_grid = magnitude.truncated(places);  // whole units of 10^-places
  const Decimal below_grid = magnitude - on_grid;       // less than one unit
  const Decimal unit = Decimal::scaled(1, places);
  // Quotas on_grid * w / W, floored to the grid; what each quota loses to the
  // floor, times W, ranks the parts for the units left over (exact, no division).
  std::vector<Decimal> remainder(weights.size());
  Decimal assigned;
  for (std::size_t i = 0; i < weights.size(); ++i) {
    const Decimal quota_times_w = on_grid * weights[i];
    Decimal floor = Decimal::divide(quota_times_w, weight_sum, places);
    if (floor * weight_sum > quota_times_w) floor -= unit;
    parts[i] = floor;
    remainder[i] = quota_times_w - floor * weight_sum;
    assigned += floor;
  }
  const auto order = by_remainder(remainder);
  // Fewer units are left than parts with a nonzero remainder, so a part of
  // weight zero never gets one and no part passes the total.
  for (std::size_t k = 0; assigned < on_grid && k < order.size(); ++k) {
    parts[order[k]] += unit;
    assigned += unit;
  }
  finish_parts(parts, weights, below_grid, total);
  return parts;
}

Decimal cost_share(const Decimal& cost, const Decimal& taken, const Decimal& held) {
  if (taken == held) return cost;
  return allocate(cost, {taken, held - taken}, kCostPlaces).front();
}

Decimal AccountBook::foreign_balance(const std::string& currency) const {
  const auto it = foreign_cash.find(currency);
  return it == foreign_cash.end() ? Decimal() : sum_of(it->second, &Lot::quantity);
}

Book::Book(const std::vector<Account>& accounts,
           std::unordered_map<std::int64_t, std::string> pending,
           std::shared_ptr<const market::View> rates)
    : accounts_(accounts),
      books_(accounts.size()),
      rates_(std::move(rates)),
      pending_(std::move(pending)) {
  for (std::size_t i = 0; i < accounts_.size(); ++i) index_[accounts_[i].id] = i;
}

const AccountBook& Book::account(std::int64_t account_id) const {
  return books_.at(index_.at(account_id));
}

std::optional<Book::TradePrice> Book::last_trade(std::int64_t security_id) const {
  const auto it = last_trade_.find(security_id);
  if (it == last_trade_.end()) return std::nullopt;
  return it->second;
}

std::optional<Decimal> Book::last_trade_price(std::int64_t security_id) const {
  if (auto trade = last_trade(security_id)) return trade->price;
  return std::nullopt;
}

Book Book::holdings_copy() const {
  Book copy(accounts_, pending_, rates_);
  copy.books_ = books_;
  copy.last_trade_ = last_trade_;
  copy.in_transit_ = in_transit_;
  copy.touched_today_ = touched_today_;
  copy.last_txn_today_ = last_txn_today_;
  return copy;
}

const Account& Book::account_info(std::int64_t account_id) const {
  return accounts_.at(index_.at(account_id));
}

AccountBook& Book::book_of(std::int64_t account_id) {
  const auto it = index_.find(account_id);
  if (it == index_.end())
    throw InputError(fmt::format("transaction refers to unknown account id {}", account_id));
  return books_[it->second];
}

void Book::apply_split(const Split& split) {
  for (auto& book : books_) {
    auto it = book.positions.find(split.security_id);
    if (it == book.positions.end()) continue;
    for (auto& lot : it->second.lots) lot.quantity *= split.ratio;
  }
  if (auto it = last_trade_.find(split.security_id); it != last_trade_.end())
    it->second.price = Decimal::divide(it->second.price, split.ratio, 10);
  for (auto& [id, lots] : in_transit_)
    for (auto& lot : lots) lot.quantity *= split.ratio;
}

std::string Book::describe(const Transaction& t) const {
  const std::string where = fmt::format("{} on {} in '{}'", to_string(t.kind), t.date.str(),
                                        printable(account_info(t.account_id).name));
  if (const auto it = pending_.find(t.id); it != pending_.end())
    return it->second.empty() ? "the new " + where : it->second + ": " + where;
  return fmt::format("transaction {} ({})", t.id, where);
}

void Book::apply_action(const CorporateAction& action) {
  ActionEngine(*this).apply(action);
}

// Order in which lots are taken for a method; `lots` is left untouched.
std::vector<std::size_t> taking_order(const std::vector<Lot>& lots, BasisMethod method) {
  std::vector<std::size_t> order(lots.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  auto older = [&](std::size_t a, std::size_t b) {
    return lots[a].acquired != lots[b].acquired ? lots[a].acquired < lots[b].acquired
                                                : lots[a].lot_id < lots[b].lot_id;
  };
  switch (method) {
    case BasisMethod::lifo:
      std::stable_sort(order.begin(), order.end(), [&](auto a, auto b) { return older(b, a); });
      break;
    case BasisMethod::hifo:
      std::stable_sort(order.begin(), order.end(), [&](auto a, auto b) {
        // Compare unit costs exactly: cost_a / qty_a > cost_b / qty_b.
        const Decimal lhs = lots[a].cost * lots[b].quantity;
        const Decimal rhs = lots[b].cost * lots[a].quantity;
        return lhs != rhs ? lhs > rhs : older(a, b);
      });
      break;
    default:  // fifo, and average (which takes quantities oldest first)
      // Lots are opened in posting order, so they are usually oldest first
      // already; stable sorting them again would only copy the order.
      if (!std::is_sorted(order.begin(), order.end(), older))
        std::stable_sort(order.begin(), order.end(), older);
  }
  return order;
}

// Removes `quantity` from `lot`, returning the removed part with its share of cost.
Lot cut(Lot& lot, const Decimal& quantity) {
  Lot part = lot;
  part.quantity = quantity;
  if (quantity == lot.quantity) {
    lot.quantity = Decimal();
    lot.cost = Decimal();
    return part;
  }
  part.cost = cost_share(lot.cost, quantity, lot.quantity);
  if (lot.local_cost) {
    part.local_cost = cost_share(*lot.local_cost, quantity, lot.quantity);
    *lot.local_cost -= *part.local_cost;
  }
  lot.quantity -= quantity;
  lot.cost -= part.cost;
  return part;
}

void drop_empty(std::vector<Lot>& lots) {
  lots.erase(
      std::remove_if(lots.begin(), lots.end(), [](const Lot& l) { return l.quantity.is_zero(); }),
      lots.end());
}

std::vector<Lot> Book::take_lots(const Transaction& txn, const Account& account,
                                 Position& position) {
  const Decimal wanted = *txn.quantity;
  const Decimal held = position.quantity();
  if (wanted > held)
    throw InputError(fmt::format("{}: cannot take {} units; only {} held", describe(txn),
                                 wanted.str(), held.str()));
  std::vector<Lot> taken;
  if (!txn.lots.empty()) {
    Decimal picked;
    for (const auto& pick : txn.lots) {
      auto it = std::find_if(position.lots.begin(), position.lots.end(),
                             [&](const Lot& l) { return l.lot_id == pick.lot_id; });
      if (it == position.lots.end())
        throw InputError(
            fmt::format("{}: lot {} is not open in this position", describe(txn), pick.lot_id));
      if (pick.quantity > it->quantity)
        throw InputError(fmt::format("{}: lot {} holds {}, fewer than the {} named", describe(txn),
                                     pick.lot_id, it->quantity.str(), pick.quantity.str()));
      picked += pick.quantity;
    }
    if (picked != wanted)
      throw InputError(fmt::format("{}: the lots named add up to {}, not the quantity {}",
                                   describe(txn), picked.str(), wanted.str()));
    for (const auto& pick : txn.lots) {
      auto it = std::find_if(position.lots.begin(), position.lots.end(),
                             [&](const Lot& l) { return l.lot_id == pick.lot_id; });
      taken.push_back(cut(*it, pick.quantity));
    }
    drop_empty(position.lots);
    return taken;
  }
  if (account.basis == BasisMethod::specific)
    throw InputError(
        fmt::format("{}: account '{}' sells specific lots; name them with --lots LOT:QUANTITY (see "
                    "'keel lots')",
                    describe(txn), printable(account.name)));

  // Only average cost re-pools what it takes; the other methods take each
  // lot's own cost, and need no sum of them.
  const Decimal cost_before = account.basis == BasisMethod::average ? position.cost() : Decimal();
  Decimal remaining = wanted;
  for (std::size_t i : taking_order(position.lots, account.basis)) {
    if (remaining.is_zero()) break;
    Lot& lot = position.lots[i];
    const Decimal q = std::min(remaining, lot.quantity);
    taken.push_back(cut(lot, q));
    remaining -= q;
  }
  drop_empty(position.lots);
  if (account.basis == BasisMethod::average) {
    // Average cost: the units leave at the pooled average, and what stays is
    // re-pooled so every open lot carries the same unit cost.
    const Decimal taken_cost = cost_share(cost_before, wanted, held);
    std::vector<Decimal> taken_qty, open_qty;
    for (const auto& l : taken) taken_qty.push_back(l.quantity);
    for (const auto& l : position.lots) open_qty.push_back(l.quantity);
    const auto taken_parts = allocate(taken_cost, taken_qty, kCostPlaces);
    for (std::size_t i = 0; i < taken.size(); ++i) taken[i].cost = taken_parts[i];
    const auto open_parts = allocate(cost_before - taken_cost, open_qty, kCostPlaces);
    for (std::size_t i = 0; i < position.lots.size(); ++i) position.lots[i].cost = open_parts[i];
    // A foreign position pools its cost in the security's currency the same way.
    if (!taken.empty() && taken.front().local_cost) {
      Decimal local_before;
      for (const auto& l : taken) local_before += l.local_cost.value_or(Decimal());
      for (const auto& l : position.lots) local_before += l.local_cost.value_or(Decimal());
      const Decimal taken_local = cost_share(local_before, wanted, held);
      const auto taken_local_parts = allocate(taken_local, taken_qty, kCostPlaces);
      for (std::size_t i = 0; i < taken.size(); ++i) taken[i].local_cost = taken_local_parts[i];
      const auto open_local_parts = allocate(local_before - taken_local, open_qty, kCostPlaces);
      for (std::size_t i = 0; i < position.lots.size(); ++i)
        position.lots[i].local_cost = open_local_parts[i];
    }
  }
  return taken;
}

void Book::apply_buy(const Transaction& txn, AccountBook& book) {
  const Decimal gross = *txn.quantity * *txn.price;
  auto& position = book.positions[*txn.security_id];
  position.lots.push_back(Lot{txn.id, txn.date, *txn.quantity, gross + txn.fee});
  last_trade_[*txn.security_id] = TradePrice{txn.date, *txn.price};
  book.cash -= gross + txn.fee;
}

void Book::apply_sell(const Transaction& txn, const Account& account, AccountBook& book) {
  auto& position = book.positions[*txn.security_id];
  const auto taken = take_lots(txn, account, position);
  const Decimal proceeds = *txn.quantity * *txn.price - txn.fee;
  std::vector<Decimal> quantities;
  for (const auto& lot : taken) quantities.push_back(lot.quantity);
  const auto proceeds_parts = allocate(proceeds, quantities, kCostPlaces);
  for (std::size_t i = 0; i < taken.size(); ++i) {
    realized_.push_back(RealizedPart{txn.account_id, *txn.security_id, taken[i].lot_id, txn.id,
                                     taken[i].acquired, txn.date, taken[i].quantity,
                                     proceeds_parts[i], taken[i].cost});
  }
  last_trade_[*txn.security_id] = TradePrice{txn.date, *txn.price};
  if (position.lots.empty()) book.positions.erase(*txn.security_id);
  book.cash += proceeds;
}

void Book::apply_transfer_in(const Transaction& txn, AccountBook& book) {
  if (!txn.security_id) {
    book.cash += *txn.amount;
    return;
  }
  auto& position = book.positions[*txn.security_id];
  if (txn.link_id) {
    auto it = in_transit_.find(*txn.link_id);
    if (it == in_transit_.end())
      throw InputError(
          fmt::format("transaction {}: its transfer out {} was not found", txn.id, *txn.link_id));
    Decimal carried;
    for (auto& lot : it->second) {
      carried += lot.cost;
      position.lots.push_back(std::move(lot));
    }
    in_transit_.erase(it);
    moved_.push_back(MovedCost{txn.id, txn.account_id, *txn.security_id, txn.date, true, carried});
  } else {
    const Decimal unit = txn.price.value_or(Decimal());
    position.lots.push_back(
        Lot{txn.id, txn.acquired.value_or(txn.date), *txn.quantity, *txn.quantity * unit});
    if (txn.price) last_trade_[*txn.security_id] = TradePrice{txn.date, *txn.price};
    moved_.push_back(
        MovedCost{txn.id, txn.account_id, *txn.security_id, txn.date, true, *txn.quantity * unit});
  }
  book.cash -= txn.fee;
}

void Book::apply_transfer_out(const Transaction& txn, const Account& account, AccountBook& book) {
  if (!txn.security_id) {
    book.cash -= *txn.amount;
    return;
  }
  auto& position = book.positions[*txn.security_id];
  auto taken = take_lots(txn, account, position);
  if (position.lots.empty()) book.positions.erase(*txn.security_id);
  Decimal cost;
  for (const auto& lot : taken) cost += lot.cost;
  moved_.push_back(MovedCost{txn.id, txn.account_id, *txn.security_id, txn.date, false, cost});
  in_transit_[txn.id] = std::move(taken);
  book.cash -= txn.fee;
}

void Book::apply(const Transaction& txn) {
  AccountBook& book = book_of(txn.account_id);
  const Account& account = account_info(txn.account_id);
  if (apply_foreign(txn, account, book)) {
    touched_today_.insert(txn.account_id);
    last_txn_today_[txn.account_id] = &txn;
    return;
  }
  switch (txn.kind) {
    case TxnKind::deposit:
    case TxnKind::dividend:
    case TxnKind::interest:
      book.cash += *txn.amount;
      break;
    case TxnKind::withdrawal:
    case TxnKind::tax:
    case TxnKind::fee:
      book.cash -= *txn.amount;
      break;
    case TxnKind::buy:
      apply_buy(txn, book);
      break;
    case TxnKind::sell:
      apply_sell(txn, account, book);
      break;
    case TxnKind::transfer_in:
      apply_transfer_in(txn, book);
      break;
    case TxnKind::transfer_out:
      apply_transfer_out(txn, account, book);
      break;
    case TxnKind::exchange:  // apply_foreign() books every exchange
    case TxnKind::void_entry:
      break;  // replay() never passes voids here
  }
  touched_today_.insert(txn.account_id);
  last_txn_today_[txn.account_id] = &txn;
}

void Book::close_day(Date day) {
  for (const auto id : touched_today_) {
    const Account& info = account_info(id);
    const AccountBook& book = books_[index_.at(id)];
    if (!info.allow_negative_cash && book.cash.is_negative())
      throw InputError(fmt::format(
          "cash in '{}' would be {} at the end of {} (after {}); the account does not allow "
          "negative cash",
          printable(info.name), book.cash.str(), day.str(), describe(*last_txn_today_[id])));
  }
  touched_today_.clear();
  last_txn_today_.clear();
}

std::unordered_set<std::int64_t> voided_ids(const std::vector<Transaction>& transactions) {
  std::unordered_map<std::int64_t, std::int64_t> voider;  // row -> the void naming it
  for (const auto& t : transactions)
    if (t.kind == TxnKind::void_entry && t.voids_id) voider[*t.voids_id] = t.id;
  // Along a chain row <- void <- void of the void <- ..., the last void is in
  // force, so the rows below it alternate: cancelled, in force, cancelled...
  std::unordered_map<std::int64_t, bool> cancelled;
  for (const auto& entry : voider) {
    const std::int64_t row = entry.first;
    if (cancelled.count(row)) continue;
    std::vector<std::int64_t> chain{row};
    std::unordered_set<std::int64_t> seen{row};
    for (std::int64_t at = row;;) {
      const auto it = voider.find(at);
      if (it == voider.end()) break;  // `at` is the top: in force
      const std::int64_t next = it->second;
      if (cancelled.count(next)) {  // known already: anchor the chain on it
        chain.push_back(next);
        break;
      }
      if (!seen.insert(next).second) break;  // a loop (cannot be written through keel)
      chain.push_back(next);
      at = next;
    }
    const auto anchor = cancelled.find(chain.back());
    bool state = anchor != cancelled.end() && anchor->second;
    cancelled[chain.back()] = state;
    for (std::size_t i = chain.size() - 1; i-- > 0;) {
      state = !state;
      cancelled[chain[i]] = state;
    }
  }
  std::unordered_set<std::int64_t> out;
  for (const auto& [id, is_cancelled] : cancelled)
    if (is_cancelled) out.insert(id);
  return out;
}

Replayer::Replayer(const LedgerLog& log) : book_(log.accounts, log.pending, log.rates) {
  const auto voided = voided_ids(log.transactions);
  std::size_t lot_rows = 0;
  for (const auto& t : log.transactions)
    if (t.kind != TxnKind::void_entry && !voided.count(t.id)) {
      live_.push_back(&t);
      lot_rows += t.security_id && t.quantity ? 1 : 0;
    }
  // Each lot opened is disposed of at most once whole, and a sale or
  // transfer out cuts into about one more: the realized parts of most
  // ledgers, without counting them first.
  book_.reserve_realized(lot_rows);
  const auto posting_order = [](const Transaction* a, const Transaction* b) {
    return a->date != b->date ? a->date < b->date : a->id < b->id;
  };
  // The store lists rows in posting order already; sorting them again
  // would still compare each row about log2(n) times.
  if (!std::is_sorted(live_.begin(), live_.end(), posting_order))
    std::sort(live_.begin(), live_.end(), posting_order);
  actions_ = live_actions(log.actions);
  for (const auto& split : log.splits) splits_.push_back(&split);
  std::sort(splits_.begin(), splits_.end(), [](const Split* a, const Split* b) {
    return a->date != b->date ? a->date < b->date : a->id < b->id;
  });
}

void Replayer::close_open_day(const DayObserver& observer) {
  if (!open_day_) return;
  book_.close_day(*open_day_);
  if (observer) observer(*open_day_, book_);
  open_day_.reset();
}

const Book& Replayer::advance_to(Date day, const DayObserver& observer) {
  for (;;) {
    // The next event is the earliest of the next split, corporate action and
    // transaction; on a shared day splits go first, then actions (start of day).
    const std::optional<Date> split_day =
        next_split_ < splits_.size() && splits_[next_split_]->date <= day
            ? std::optional(splits_[next_split_]->date)
            : std::nullopt;
    const std::optional<Date> action_day =
        next_action_ < actions_.size() && actions_[next_action_]->date <= day
            ? std::optional(actions_[next_action_]->date)
            : std::nullopt;
    const std::optional<Date> txn_day = next_txn_ < live_.size() && live_[next_txn_]->date <= day
                                            ? std::optional(live_[next_txn_]->date)
                                            : std::nullopt;
    const bool split_next = split_day && (!action_day || *split_day <= *action_day) &&
                            (!txn_day || *split_day <= *txn_day);
    const bool action_next = !split_next && action_day && (!txn_day || *action_day <= *txn_day);
    if (!split_next && !action_next && !txn_day) break;
    const Date event_day = split_next ? *split_day : action_next ? *action_day : *txn_day;
    if (open_day_ && *open_day_ != event_day) close_open_day(observer);
    open_day_ = event_day;
    if (split_next)
      book_.apply_split(*splits_[next_split_++]);
    else if (action_next)
      book_.apply_action(*actions_[next_action_++]);
    else
      book_.apply(*live_[next_txn_++]);
  }
  close_open_day(observer);
  return book_;
}

const Book& Replayer::finish(const DayObserver& observer) {
  return advance_to(Date::from_ymd(9999, 12, 31), observer);
}

Book replay(const LedgerLog& log, std::optional<Date> until, const DayObserver& observer) {
  Replayer replayer(log);
  if (until)
    replayer.advance_to(*until, observer);
  else
    replayer.finish(observer);
  return std::move(replayer).release();
}

}  // namespace keel
