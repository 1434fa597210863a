// The rules of exchange rates as known on a day, over the rows a
// market::View (market/view.h) has read; readers ask the view, which is the
// one place that answers "the rate on day D".
//
// Contract
//  - A stored row (base, quote, date, rate) says one `base` unit bought
//    `rate` `quote` units on `date`. The rate for a pair on a day is the
//    latest row on or before that day.
//  - find(base, quote, day) answers from a stored row of the pair (direct),
//    of the reverse pair (inverted: 1 / rate) or, failing both, through one
//    pivot currency that has a rate with each side (crossed; the pivots are
//    tried in alphabetical order). A derived answer says how it was derived
//    and is dated by its older leg. A rate of 1 is never assumed here, not
//    even for a currency against itself (View::rate answers that itself).
//  - convert(amount, from, to, day) multiplies by the direct legs and
//    divides by the inverted ones exactly, then rounds once, half-to-even, to
//    the minor units of `to` (ISO 4217, core/currency.h).
//  - Both throw InputError "no exchange rate for EUR/USD on or before
//    2024-03-01 ..." when no rate can be found; they never guess.
#pragma once

#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"

namespace keel::market {

enum class FxHow { direct, inverted, crossed, same };

struct FxQuote {
  std::string base, quote;
  Decimal rate;  // quote units per base unit; derived ones to kDerivedPlaces
  Date day;      // the day of the (older) stored row used
  FxHow how = FxHow::direct;
  std::string pivot;             // for crossed
  std::string describe() const;  // "EUR/USD 1.1 (2024-03-01, inverted from USD/EUR)"
};

class FxRates {
 public:
  static constexpr int kDerivedPlaces = 12;
  void add(const std::string& base, const std::string& quote, Date day, const Decimal& rate);

  std::optional<FxQuote> try_find(const std::string& base, const std::string& quote,
                                  Date day) const;
  FxQuote find(const std::string& base, const std::string& quote, Date day) const;
  Decimal convert(const Decimal& amount, const std::string& from, const std::string& to,
                  Date day) const;
  bool empty() const { return series_.empty(); }

 private:
  struct Leg {
    Decimal rate;
    Date day;
    bool inverted = false;
  };
  std::optional<Leg> leg(const std::string& from, const std::string& to, Date day) const;
  std::optional<std::pair<Leg, Leg>> cross(const std::string& from, const std::string& to, Date day,
                                           std::string& pivot) const;
  // (base, quote) -> rows sorted by date
  std::map<std::pair<std::string, std::string>, std::vector<std::pair<Date, Decimal>>> series_;
};

}  // namespace keel::market
