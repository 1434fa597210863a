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

}  // namespace

const Security& known_security(const market::View& view, std::int64_t security_id) {
  if (const Security* s = view.security(security_id)) return *s;
  throw std::logic_error(fmt::format("ledger: security {} is not in the market view", security_id));
}

bool held_long_term(Date acquired, Date disposed) {
  // A lot acquired in year 9999 cannot be held a year within the calendar.
  if (acquired.year() == 9999) return false;
  return disposed > acquired.plus_years(1);
}

Holdings holdings(store::Database& db, Date as_of, const std::optional<std::string>& account) {
  const auto only = account_filter(db, account);
  const Book book = replay(load_log(db), as_of);
  return holdings_of(book, market::DayView(db), as_of, only);
}

Holdings holdings_of(const Book& book, const market::View& view, Date as_of,
                     std::optional<std::int64_t> only) {
  if (!only) one_currency(book.accounts(), "holdings");
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
    for (const auto& [security_id, position] : ab.positions) {
      HoldingLine line;
      line.account = info.name;
      const Security& security = known_security(view, security_id);
      line.symbol = security.symbol;
      line.quantity = position.quantity();
      line.cost_basis = position.cost();
      if (auto close = view.close(security_id, as_of)) {
        line.price = close->price;
      } else {
        line.price = book.last_trade_price(security_id).value_or(Decimal());
        line.price_is_close = false;
      }
      line.market_value = line.quantity * line.price;
      if (const std::string& c = security.currency; c != info.currency) {
        line.currency = c;
        line.local_value = line.market_value;
        auto [value, quote] = convert(line.local_value, c, info.currency, line.symbol);
        line.market_value = value;
        line.rate = quote;
      }
      line.unrealized_gain = line.market_value - line.cost_basis;
      out.total_value += line.market_value;
      out.positions.push_back(std::move(line));
    }
    out.cash.push_back(CashLine{info.name, ab.cash});
    out.total_value += ab.cash;
    for (const auto& [code, lots] : ab.foreign_cash) {
      CashLine line{info.name, ab.foreign_balance(code), code};
      auto [value, quote] = convert(line.amount, code, info.currency, "cash in " + code);
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
                               const std::optional<std::string>& account) {
  const auto only = account_filter(db, account);
  const auto symbols = symbols_by_id(db);
  const Book book = replay(load_log(db), as_of);
  std::vector<LotLine> out;
  for (const auto& info : book.accounts()) {
    if (only && info.id != *only) continue;
    for (const auto& [security_id, position] : book.account(info.id).positions)
      for (const auto& lot : position.lots)
        out.push_back(LotLine{info.name, symbols.at(security_id), lot});
  }
  std::stable_sort(out.begin(), out.end(), [](const auto& a, const auto& b) {
    return a.account != b.account ? a.account < b.account : a.symbol < b.symbol;
  });
  return out;
}

std::vector<GainLine> realized_gains(store::Database& db, std::optional<int> year,
                                     const std::optional<std::string>& account,
                                     std::optional<int> long_term_days) {
  const auto only = account_filter(db, account);
  const Book book = replay(load_log(db));
  return realized_gains_of(book, market::DayView(db), TaxStatuses::load(db), year, only,
                           long_term_days);
}

std::vector<GainLine> realized_gains_of(const Book& book, const market::View& view,
                                        const TaxStatuses& statuses, std::optional<int> year,
                                        std::optional<std::int64_t> only,
                                        std::optional<int> long_term_days) {
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
    out.push_back(std::move(line));
  }
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
