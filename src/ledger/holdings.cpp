#include "ledger/holdings.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <stdexcept>

#include "core/error.h"
#include "ledger/accounts.h"
#include "ledger/posting.h"
#include "ledger/tax.h"
#include "market/day_view.h"
#include "store/ledger_store.h"

namespace keel::ledger {
namespace {

std::map<std::int64_t, std::string> symbols_by_id(store::Database& db) {
  std::map<std::int64_t, std::string> out;
  for (const auto& s : store::list_securities(db)) out[s.id] = s.symbol;
  return out;
}

std::optional<std::int64_t> account_filter(store::Database& db,
                                           const std::optional<std::string>& account) {
  if (!account) return std::nullopt;
  return store::account_named(db, *account).id;
}

// What a lot of `security` (in an account keeping `own`) cost in `currency`:
// its local cost when the security trades in it, else its cost converted at
// the rate of its acquisition day.
Decimal cost_in(const Lot& lot, const std::string& own, const Security& security,
                const std::string& currency, const market::View& view, const std::string& what) {
  if (currency == own) return lot.cost;
  if (currency == security.currency && lot.local_cost) return *lot.local_cost;
  try {
    return view.convert(lot.cost, own, currency, lot.acquired);
  } catch (const InputError& e) {
    throw InputError(fmt::format("{}: the cost of lot {} of {}, acquired {}: {}", what, lot.lot_id,
                                 security.symbol, lot.acquired.str(), e.what()));
  }
}

// A realized part of `security` (sold in an account keeping `own`) in
// `currency`: proceeds at the rate of the disposal day (the local proceeds
// when the security trades in it), cost as cost_in(), and the price part the
// local gain at the disposal day's rate.
void part_in(RealizedPart& part, const std::string& own, const Security& security,
             const std::string& currency, const market::View& view) {
  if (currency == own) return;
  const bool local = part.local_cost.has_value();
  const std::string& from = local ? security.currency : own;
  const Decimal local_proceeds = local ? *part.local_proceeds : part.proceeds;
  const Decimal local_cost = local ? *part.local_cost : part.cost;
  const Lot lot{part.lot_id, part.acquired, part.quantity, part.cost, part.local_cost};
  part.cost = cost_in(lot, own, security, currency, view, "gains");
  if (from == currency) {
    part.proceeds = local_proceeds;
    part.price_gain = local_proceeds - local_cost;
  } else {
    try {
      part.proceeds = view.convert(part.proceeds, own, currency, part.disposed);
      part.price_gain = view.convert(local_proceeds - local_cost, from, currency, part.disposed);
    } catch (const InputError& e) {
      throw InputError(fmt::format("gains: the sale of lot {} of {} on {}: {}", part.lot_id,
                                   security.symbol, part.disposed.str(), e.what()));
    }
  }
  // The local figures stay in the security's currency; a part in the
  // account's currency gets them so that its price part can be read.
  if (!local) {
    part.local_proceeds = local_proceeds;
    part.local_cost = local_cost;
  }
}

}  // namespace

std::string reporting_currency(store::Database& db, const std::optional<std::string>& asked,
                               const std::optional<std::string>& account) {
  if (asked) return *asked;
  if (account) return store::account_named(db, *account).currency;
  const auto accounts = store::list_accounts(db);
  if (!mixed_currencies(accounts) && !accounts.empty()) return accounts.front().currency;
  return store::ledger_currency(db).value_or(accounts.empty() ? std::string()
                                                              : accounts.front().currency);
}

const Security& known_security(const market::View& view, std::int64_t security_id) {
  if (const Security* s = view.security(security_id)) return *s;
  throw std::logic_error(fmt::format("ledger: security {} is not in the market view", security_id));
}

bool held_long_term(Date acquired, Date disposed) {
  // A lot acquired in year 9999 cannot be held a year within the calendar.
  if (acquired.year() == 9999) return false;
  return disposed > acquired.plus_years(1);
}

Holdings holdings(store::Database& db, Date as_of, const std::optional<std::string>& account,
                  const std::optional<std::string>& currency) {
  const auto only = account_filter(db, account);
  const Book book = replay(load_log(db, store::TxnFields::replay), as_of);
  return holdings_of(book, market::DayView(db), as_of, only, currency);
}

Holdings holdings_of(const Book& book, const market::View& view, Date as_of,
                     std::optional<std::int64_t> only, const std::optional<std::string>& currency) {
  if (!only && !currency) one_currency(book.accounts(), "holdings");
  auto convert = [&](const Decimal& amount, const std::string& from, const std::string& to,
                     const std::string& what) {
    try {
      return std::make_pair(view.convert(amount, from, to, as_of), view.rate(to, from, as_of));
    } catch (const InputError& e) {
      throw InputError(fmt::format("holdings: {}: {}", what, e.what()));
    }
  };
  Holdings out;
  out.as_of = as_of;
  for (const auto& info : book.accounts()) {
    if (only && info.id != *only) continue;
    const AccountBook& ab = book.account(info.id);
    const std::string& reporting = currency ? *currency : info.currency;
    for (const auto& [security_id, position] : ab.positions) {
      HoldingLine line;
      line.account = info.name;
      const Security& security = known_security(view, security_id);
      line.symbol = security.symbol;
      line.quantity = position.quantity();
      line.cost_basis = position.cost();
      if (reporting != info.currency) {
        line.cost_basis = Decimal();
        for (const auto& lot : position.lots)
          line.cost_basis += cost_in(lot, info.currency, security, reporting, view, "holdings");
      }
      if (auto close = view.close(security_id, as_of)) {
        line.price = close->price;
      } else {
        line.price = book.last_trade_price(security_id).value_or(Decimal());
        line.price_is_close = false;
      }
      line.market_value = line.quantity * line.price;
      if (const std::string& c = security.currency; c != reporting) {
        line.currency = c;
        line.local_value = line.market_value;
        auto [value, quote] = convert(line.local_value, c, reporting, line.symbol);
        line.market_value = value;
        line.rate = quote;
      }
      line.unrealized_gain = line.market_value - line.cost_basis;
      out.total_value += line.market_value;
      out.positions.push_back(std::move(line));
    }
    if (reporting == info.currency) {
      out.cash.push_back(CashLine{info.name, ab.cash});
      out.total_value += ab.cash;
    } else if (ab.cash.is_zero()) {
      // No cash needs no rate (an account before its first row, or emptied).
      CashLine line{info.name, ab.cash, info.currency};
      line.own = true;
      out.cash.push_back(std::move(line));
    } else {
      CashLine line{info.name, ab.cash, info.currency};
      line.own = true;
      auto [value, quote] =
          convert(line.amount, info.currency, reporting, "cash in " + info.currency);
      line.value = value;
      line.rate = quote;
      out.total_value += value;
      out.cash.push_back(std::move(line));
    }
    for (const auto& [code, lots] : ab.foreign_cash) {
      CashLine line{info.name, ab.foreign_balance(code), code};
      auto [value, quote] = convert(line.amount, code, reporting, "cash in " + code);
      line.value = value;
      line.rate = quote;
      for (const auto& lot : lots) line.cost += lot.cost;
      out.total_value += value;
      out.cash.push_back(std::move(line));
    }
  }
  std::sort(out.positions.begin(), out.positions.end(), [](const auto& a, const auto& b) {
    return a.account != b.account ? a.account < b.account : a.symbol < b.symbol;
  });
  return out;
}

std::vector<LotLine> open_lots(store::Database& db, Date as_of,
                               const std::optional<std::string>& account,
                               const std::optional<std::string>& currency) {
  const auto only = account_filter(db, account);
  const auto symbols = symbols_by_id(db);
  const Book book = replay(load_log(db, store::TxnFields::replay), as_of);
  const market::DayView view(db);
  std::vector<LotLine> out;
  for (const auto& info : book.accounts()) {
    if (only && info.id != *only) continue;
    for (const auto& [security_id, position] : book.account(info.id).positions)
      for (const auto& lot : position.lots) {
        out.push_back(LotLine{info.name, symbols.at(security_id), lot});
        if (currency && *currency != info.currency)
          out.back().lot.cost = cost_in(lot, info.currency, known_security(view, security_id),
                                        *currency, view, "lots");
      }
  }
  std::stable_sort(out.begin(), out.end(), [](const auto& a, const auto& b) {
    return a.account != b.account ? a.account < b.account : a.symbol < b.symbol;
  });
  return out;
}

std::vector<GainLine> realized_gains(store::Database& db, std::optional<int> year,
                                     const std::optional<std::string>& account,
                                     std::optional<int> long_term_days,
                                     const std::optional<std::string>& currency) {
  const auto only = account_filter(db, account);
  const Book book = replay(load_log(db, store::TxnFields::replay));
  return realized_gains_of(book, market::DayView(db), TaxStatuses::load(db), year, only,
                           long_term_days, currency);
}

std::vector<GainLine> realized_gains_of(const Book& book, const market::View& view,
                                        const TaxStatuses& statuses, std::optional<int> year,
                                        std::optional<std::int64_t> only,
                                        std::optional<int> long_term_days,
                                        const std::optional<std::string>& currency) {
  std::vector<GainLine> out;
  for (const auto& part : book.realized()) {
    if (only && part.account_id != *only) continue;
    if (year && part.disposed.year() != *year) continue;
    GainLine line{book.account_info(part.account_id).name,
                  known_security(view, part.security_id).symbol, part};
    line.days_held = part.disposed - part.acquired;
    line.long_term = long_term_days ? line.days_held > *long_term_days
                                    : held_long_term(part.acquired, part.disposed);
    line.tax_status = statuses.on(part.account_id, part.disposed);
    if (currency)
      part_in(line.part, book.account_info(part.account_id).currency,
              known_security(view, part.security_id), *currency, view);
    out.push_back(std::move(line));
  }
  if (currency) return out;
  // The lines are in each account's own currency; their totals may not mix.
  std::vector<Account> selling;
  for (const auto& info : book.accounts())
    if (std::any_of(out.begin(), out.end(),
                    [&](const GainLine& g) { return g.part.account_id == info.id; }))
      selling.push_back(info);
  one_currency(selling, "gains");
  return out;
}

GainTotals GainsByTerm::all() const {
  return {short_term.proceeds + long_term.proceeds, short_term.cost + long_term.cost,
          short_term.gain + long_term.gain, short_term.parts + long_term.parts};
}

GainsByTerm totals_by_term(const std::vector<GainLine>& gains) {
  GainsByTerm out;
  for (const auto& g : gains) {
    GainTotals& t = g.long_term ? out.long_term : out.short_term;
    t.proceeds += g.part.proceeds;
    t.cost += g.part.cost;
    t.gain += g.part.gain();
    ++t.parts;
  }
  return out;
}

}  // namespace keel::ledger
