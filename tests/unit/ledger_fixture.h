// A small in-memory ledger for examples: accounts, securities and one-line
// posting helpers, so each test reads as the story it checks.
#pragma once

#include <functional>
#include <string>
#include <tuple>
#include <vector>

#include "core/error.h"
#include "ledger/holdings.h"
#include "ledger/posting.h"
#include "store/database.h"
#include "store/fingerprint.h"
#include "store/fx_store.h"
#include "store/ledger_store.h"
#include "store/market_data.h"

namespace keel::testing {

inline Decimal dec(const char* text) {
  return Decimal::parse(text);
}
inline Date day(const char* text) {
  return Date::parse(text);
}
// The message of the InputError `f` throws; "(no error)" when it throws none.
inline std::string error_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

struct LedgerFixture {
  store::Database db = store::Database::in_memory();

  void account(const std::string& name, BasisMethod basis = BasisMethod::fifo,
               bool allow_negative = false, const char* currency = "USD") {
    Account a;
    a.name = name;
    a.currency = currency;
    a.basis = basis;
    a.allow_negative_cash = allow_negative;
    store::insert_account(db, a);
  }
  void security(const std::string& symbol, SecurityKind kind = SecurityKind::stock) {
    Security s;
    s.symbol = symbol;
    s.name = symbol + " (invented)";
    s.currency = "USD";
    s.kind = kind;
    store::insert_security(db, s);
  }
  std::int64_t cash(TxnKind kind, const char* date, const std::string& account, const char* amount,
                    std::optional<std::string> symbol = std::nullopt) {
    ledger::PostRequest r;
    r.kind = kind;
    r.date = day(date);
    r.account = account;
    r.amount = dec(amount);
    r.symbol = std::move(symbol);
    return ledger::post(db, r).front();
  }
  std::int64_t trade(TxnKind kind, const char* date, const std::string& account,
                     const std::string& symbol, const char* quantity, const char* price,
                     const char* fee = "0", std::vector<LotPick> lots = {}) {
    ledger::PostRequest r;
    r.kind = kind;
    r.date = day(date);
    r.account = account;
    r.symbol = symbol;
    r.quantity = dec(quantity);
    r.price = dec(price);
    r.fee = dec(fee);
    r.lots = std::move(lots);
    return ledger::post(db, r).front();
  }
  std::int64_t buy(const char* date, const std::string& account, const std::string& symbol,
                   const char* quantity, const char* price, const char* fee = "0") {
    return trade(TxnKind::buy, date, account, symbol, quantity, price, fee);
  }
  std::int64_t sell(const char* date, const std::string& account, const std::string& symbol,
                    const char* quantity, const char* price, const char* fee = "0",
                    std::vector<LotPick> lots = {}) {
    return trade(TxnKind::sell, date, account, symbol, quantity, price, fee, std::move(lots));
  }
  // Market data through the importers' writer.
  // Closes: {symbol, date, close}; figures: {symbol, period, known_on, value}.
  void closes(const std::vector<std::tuple<std::string, std::string, std::string>>& rows,
              bool replace = false) {
    store::WriteTransaction tx(db);
    store::MarketWriter w(db, replace);
    std::uint64_t line = 0;
    for (const auto& [sym, date, close] : rows) w.price(w.security(sym), date, close, ++line);
    w.finish_prices();
    tx.commit();
  }
  void figures(
      const std::string& metric,
      const std::vector<std::tuple<std::string, std::string, std::string, std::string>>& rows) {
    store::WriteTransaction tx(db);
    store::MarketWriter w(db, false);
    std::string existing;
    for (const auto& [sym, period, known, value] : rows)
      w.metric(w.security(sym), metric, period, known, value, existing);
    tx.commit();
  }
  void split_of(const std::string& symbol, const std::string& date, const std::string& ratio) {
    store::WriteTransaction tx(db);
    store::MarketWriter w(db, false);
    std::string existing;
    w.split(w.security(symbol), date, ratio, existing);
    tx.commit();
  }
  // Exchange rates: {base, quote, date, rate}.
  void fx(const std::vector<std::tuple<std::string, std::string, std::string, std::string>>& rows) {
    store::WriteTransaction tx(db);
    std::string existing;
    for (const auto& [base, quote, date, rate] : rows)
      store::upsert_fx_rate(db, {base, quote, Date::parse(date), Decimal::parse(rate)}, false,
                            existing);
    tx.commit();
  }
  void distribution(const std::string& symbol, const std::string& ex, const std::string& pay,
                    const std::string& per_share) {
    store::WriteTransaction tx(db);
    store::MarketWriter w(db, false);
    std::string existing;
    w.distribution(w.security(symbol), ex, pay, per_share, existing);
    tx.commit();
  }

  // Account "Main" holding ALFA after a deposit of `cash` on 2024-01-02.
  void main_with_alfa(const char* cash, BasisMethod basis = BasisMethod::fifo) {
    account("Main", basis);
    security("ALFA");
    this->cash(TxnKind::deposit, "2024-01-02", "Main", cash);
  }
  // One unit of ALFA bought for 0.0151, then 0.999 of it sold at 0.02: a lot
  // whose cost has digits below the cent, cut nearly whole.
  void sub_cent_lot(BasisMethod basis = BasisMethod::fifo) {
    main_with_alfa("1", basis);
    buy("2024-01-03", "Main", "ALFA", "1", "0.0151");
    sell("2024-02-01", "Main", "ALFA", "0.999", "0.02");
  }
  Book book() { return ledger::check_ledger(db); }
  std::string dump() { return store::content_dump(db); }
  std::vector<ledger::GainLine> gains() { return ledger::realized_gains(db, std::nullopt); }
};

}  // namespace keel::testing
