// Holdings: what the ledger holds on a day, valued at that day's prices.
//
// A position's price is its latest close on or before the day, else its
// latest trade price; market value is quantity x price, exact. Amounts are
// in the accounts' own currency (keel does not convert between currencies).
// Throws InputError for an unknown account name.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "ledger/book.h"
#include "store/database.h"

namespace keel::ledger {

struct HoldingLine {
  std::string account;
  std::string symbol;
  Decimal quantity;
  Decimal cost_basis;
  Decimal price;
  Date price_date;  // day of the close used, or of the trade price
  bool price_is_close = true;
  Decimal market_value;
  Decimal unrealized_gain;
};

struct CashLine {
  std::string account;
  Decimal amount;
};

struct Holdings {
  Date as_of;
  std::vector<HoldingLine> positions;  // by account, then symbol
  std::vector<CashLine> cash;          // by account
  Decimal total_value;
};

Holdings holdings(store::Database& db, Date as_of,
                  const std::optional<std::string>& account = std::nullopt);

struct LotLine {
  std::string account;
  std::string symbol;
  Lot lot;
};
std::vector<LotLine> open_lots(store::Database& db, Date as_of,
                               const std::optional<std::string>& account = std::nullopt);

struct GainLine {
  std::string account;
  std::string symbol;
  RealizedPart part;
  bool long_term = false;  // held more than one year (disposed after the anniversary)
};
// Realized gains of parts disposed in `year` (every year when unset).
std::vector<GainLine> realized_gains(store::Database& db, std::optional<int> year,
                                     const std::optional<std::string>& account = std::nullopt);
bool held_long_term(Date acquired, Date disposed);

}  // namespace keel::ledger
