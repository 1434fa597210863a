#include "ledger/actions.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/error.h"

namespace keel {
namespace {

const Decimal& need(const std::optional<Decimal>& figure, const CorporateAction& a,
                    const char* what) {
  if (!figure)
    throw InputError(fmt::format("corporate action {} ({} on {}) has no {}", a.id,
                                 to_string(a.kind), a.date.str(), what));
  return *figure;
}

std::vector<Decimal> quantities(const std::vector<Lot>& lots) {
  std::vector<Decimal> out;
  for (const auto& lot : lots) out.push_back(lot.quantity);
  return out;
}

// Parts of `cost` for the units received (percent) and the rest.
std::pair<Decimal, Decimal> cost_split(const Decimal& cost, const Decimal& percent) {
  if (percent == Decimal(100)) return {cost, Decimal()};
  if (percent.is_zero()) return {Decimal(), cost};
  const auto parts = allocate(cost, {percent, Decimal(100) - percent}, kCostPlaces);
  return {parts[0], parts[1]};
}

void keep_oldest_first(std::vector<Lot>& lots) {
  std::stable_sort(lots.begin(), lots.end(), [](const Lot& a, const Lot& b) {
    return a.acquired != b.acquired ? a.acquired < b.acquired : a.lot_id < b.lot_id;
  });
}

}  // namespace

Decimal action_cash(const Decimal& units, const Decimal& per_unit) {
  // Cash changes hands in cents: round once per holder, half to even.
  return (units * per_unit).rounded(kCostPlaces);
}

Decimal fraction_of(const Decimal& units) {
  return units - units.truncated(0);
}

UnitEffect unit_effect(const CorporateAction& a) {
  UnitEffect e;
  switch (a.kind) {
    case ActionKind::split:
      e.keeps = need(a.ratio, a, "ratio");
      break;
    case ActionKind::stock_dividend:
      e.keeps = Decimal(1) + need(a.ratio, a, "ratio");
      break;
    case ActionKind::return_of_capital:
      e.keeps = Decimal(1);
      e.cash = need(a.cash, a, "cash per unit");
      break;
    case ActionKind::delisting:
      e.cash = need(a.cash, a, "cash per unit");
      break;
    case ActionKind::merger:
      // Units of the target, cash, or both; without units an all-cash takeover.
      if (a.ratio) e.target_units = *a.ratio;
      if (a.cash) e.cash = *a.cash;
      if (!a.ratio) need(a.cash, a, "cash per unit");
      break;
    case ActionKind::spinoff:
      e.keeps = Decimal(1);
      e.target_units = need(a.ratio, a, "ratio");
      break;
    case ActionKind::void_entry:
      e.keeps = Decimal(1);
      break;
  }
  return e;
}

void ActionEngine::apply(const CorporateAction& a) {
  switch (a.kind) {
    case ActionKind::split:
    case ActionKind::stock_dividend:
      split_units(a, unit_effect(a).keeps);
      break;
    case ActionKind::return_of_capital:
      return_capital(a);
      break;
    case ActionKind::delisting:
      dispose_all(a);
      break;
    case ActionKind::merger:
      if (a.ratio)
        merge(a);
      else
        dispose_all(a);
      break;
    case ActionKind::spinoff:
      spin_off(a);
      break;
    case ActionKind::void_entry:
      break;  // live_actions() never passes voids
  }
}

void ActionEngine::realize(const CorporateAction& a, std::size_t index, std::int64_t security_id,
                           const Lot& lot, const Decimal& proceeds) {
  RealizedPart part{book_.accounts_[index].id,
                    security_id,
                    lot.lot_id,
                    0,
                    lot.acquired,
                    a.date,
                    lot.quantity,
                    proceeds,
                    lot.cost};
  part.action_id = a.id;
  book_.realized_.push_back(part);
}

void ActionEngine::pay_fraction(const CorporateAction& a, std::size_t index,
                                std::int64_t security_id,
                                const std::unordered_set<std::int64_t>& lot_ids) {
  if (!a.in_lieu) return;
  AccountBook& book = book_.books_[index];
  const auto pos = book.positions.find(security_id);
  if (pos == book.positions.end()) return;
  auto& lots = pos->second.lots;
  Decimal received;
  for (const auto& lot : lots)
    if (lot_ids.empty() || lot_ids.count(lot.lot_id)) received += lot.quantity;
  const Decimal fraction = fraction_of(received);
  if (fraction.is_zero()) return;
  const Account& info = book_.accounts_[index];
  const BasisMethod method = info.basis == BasisMethod::specific ? BasisMethod::fifo : info.basis;
  std::vector<Lot> taken;
  Decimal remaining = fraction;
  for (std::size_t i : taking_order(lots, method)) {
    if (remaining.is_zero()) break;
    Lot& lot = lots[i];
    if (!lot_ids.empty() && !lot_ids.count(lot.lot_id)) continue;
    const Decimal q = std::min(remaining, lot.quantity);
    taken.push_back(cut(lot, q));
    remaining -= q;
  }
  drop_empty(lots);
  const Decimal paid = action_cash(fraction, *a.in_lieu);
  const auto parts = allocate(paid, quantities(taken), kCostPlaces);
  for (std::size_t i = 0; i < taken.size(); ++i) realize(a, index, security_id, taken[i], parts[i]);
  book.cash += paid;
  if (lots.empty()) book.positions.erase(pos);
}

void ActionEngine::split_units(const CorporateAction& a, const Decimal& factor) {
  book_.apply_split(Split{a.id, a.security_id, a.date, factor});
  for (std::size_t i = 0; i < book_.books_.size(); ++i) pay_fraction(a, i, a.security_id, {});
}

void ActionEngine::return_capital(const CorporateAction& a) {
  const Decimal& per_unit = need(a.cash, a, "cash per unit");
  for (std::size_t i = 0; i < book_.books_.size(); ++i) {
    AccountBook& book = book_.books_[i];
    const auto pos = book.positions.find(a.security_id);
    if (pos == book.positions.end()) continue;
    auto& lots = pos->second.lots;
    const Decimal paid = action_cash(pos->second.quantity(), per_unit);
    const auto parts = allocate(paid, quantities(lots), kCostPlaces);
    for (std::size_t k = 0; k < lots.size(); ++k) {
      if (parts[k] <= lots[k].cost) {
        lots[k].cost -= parts[k];
        continue;
      }
      // Beyond the cost basis: a gain on no units; the lot stays open at zero cost.
      Lot excess = lots[k];
      excess.quantity = Decimal();
      excess.cost = Decimal();
      realize(a, i, a.security_id, excess, parts[k] - lots[k].cost);
      lots[k].cost = Decimal();
    }
    book.cash += paid;
  }
}

void ActionEngine::dispose_all(const CorporateAction& a) {
  const Decimal& per_unit = need(a.cash, a, "cash per unit");
  for (std::size_t i = 0; i < book_.books_.size(); ++i) {
    AccountBook& book = book_.books_[i];
    const auto pos = book.positions.find(a.security_id);
    if (pos == book.positions.end()) continue;
    const auto lots = pos->second.lots;
    const Decimal paid = action_cash(pos->second.quantity(), per_unit);
    const auto parts = allocate(paid, quantities(lots), kCostPlaces);
    for (std::size_t k = 0; k < lots.size(); ++k) realize(a, i, a.security_id, lots[k], parts[k]);
    book.positions.erase(pos);
    book.cash += paid;
  }
}

void ActionEngine::merge(const CorporateAction& a) {
  const Decimal& ratio = need(a.ratio, a, "ratio");
  const Decimal percent = a.cash ? need(a.cost_percent, a, "cost percent") : Decimal(100);
  const std::int64_t target = *a.target_id;
  for (std::size_t i = 0; i < book_.books_.size(); ++i) {
    AccountBook& book = book_.books_[i];
    const auto pos = book.positions.find(a.security_id);
    if (pos == book.positions.end()) continue;
    const auto lots = pos->second.lots;
    book.positions.erase(pos);
    Decimal paid;
    std::vector<Decimal> cash_parts(lots.size());
    if (a.cash) {
      Decimal units;
      for (const auto& lot : lots) units += lot.quantity;
      paid = action_cash(units, *a.cash);
      cash_parts = allocate(paid, quantities(lots), kCostPlaces);
    }
    auto& into = book.positions[target].lots;
    std::unordered_set<std::int64_t> arrived;
    for (std::size_t k = 0; k < lots.size(); ++k) {
      const auto [stock_cost, cash_cost] = cost_split(lots[k].cost, percent);
      if (a.cash) {
        Lot exchanged = lots[k];
        exchanged.cost = cash_cost;
        realize(a, i, a.security_id, exchanged, cash_parts[k]);
      }
      into.push_back(Lot{lots[k].lot_id, lots[k].acquired, lots[k].quantity * ratio, stock_cost});
      arrived.insert(lots[k].lot_id);
    }
    keep_oldest_first(into);
    book.cash += paid;
    pay_fraction(a, i, target, arrived);
  }
}

void ActionEngine::spin_off(const CorporateAction& a) {
  const Decimal& ratio = need(a.ratio, a, "ratio");
  const Decimal& percent = need(a.cost_percent, a, "cost percent");
  const std::int64_t target = *a.target_id;
  for (std::size_t i = 0; i < book_.books_.size(); ++i) {
    AccountBook& book = book_.books_[i];
    const auto pos = book.positions.find(a.security_id);
    if (pos == book.positions.end()) continue;
    std::vector<Lot> born;
    for (auto& lot : pos->second.lots) {
      const auto [new_cost, kept] = cost_split(lot.cost, percent);
      lot.cost = kept;
      born.push_back(Lot{lot.lot_id, lot.acquired, lot.quantity * ratio, new_cost});
    }
    auto& into = book.positions[target].lots;
    std::unordered_set<std::int64_t> arrived;
    for (auto& lot : born) {
      arrived.insert(lot.lot_id);
      into.push_back(std::move(lot));
    }
    keep_oldest_first(into);
    pay_fraction(a, i, target, arrived);
  }
}

}  // namespace keel
