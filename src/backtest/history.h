// History: everything a back-test or a signal check may read, loaded once
// from the ledger as a market::Series, with point-in-time accessors.
//
// Contract
//  - load_history() resolves the rule's universe and sleeves against the
//    ledger with rules::Inputs, exactly as `keel propose` does (its problems
//    are InputErrors located at the rule key), and preloads over [from, to]
//    the closes of the universe, the sleeves and the `extra` symbols that the
//    ledger holds (a benchmark), the rule's metric, splits, cash
//    distributions and corporate actions (market/series.h); and the
//    securities that a merger or spin-off in [from, to] of a loaded name
//    hands out, so that they can be valued while held.
//    A rule with a [track_record] has the span start earlier, at
//    rules::TrackRecord::first_day(), for the track record's look back.
//    The rule trades in one currency (rules::Inputs): the ledger's when it
//    has one, else the first sleeve's, else the one its universe shares; with
//    none of these, a universe in several currencies is refused. Stocks left
//    out for their currency are told in `notes`.
//    With Convert::yes and a ledger currency, the rule values in that
//    currency and names priced in others stay in (rules::Inputs,
//    Convert::yes): the exchange rates of every loaded currency are loaded
//    too, and fx(row, col) is the rate into `currency` known on each day
//    (the latest on or before it; market::View::rate), 1 for `currency`
//    itself and 0 before a first rate (a name is never priced, so never
//    held, then). A note then names the currencies converted. A benchmark
//    among the extras is converted the same way (value_close), unhedged.
//  - The overload for several rules loads the union of what each needs, once;
//    they must trade in one currency (InputError naming RULES otherwise), and
//    their notes are kept once each.
//  - rebalance_days(): the last day with any close of each calendar month
//    (over every close in the ledger: `next` is the first close day after
//    the days given), kept when inside [from, to], then every k-th of them
//    starting with the first.
//  - Prices are closes as traded (not adjusted); a split's ratio applies to
//    holdings at the start of its date.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "market/series.h"
#include "rules/inputs.h"
#include "rules/rule.h"
#include "store/database.h"

namespace keel::backtest {

struct History {
  market::Series market;  // the universe, sleeves and extras over the span, with the metric
  std::optional<std::string> currency;  // the rule's (rules::Inputs)
  std::vector<std::string> notes;       // about the universe
  rules::Convert convert = rules::Convert::no;
  // Filled by load_rates(), read through fx(): per column an index into the
  // tables (-1: `currency`), and per other currency its rate on each row.
  std::vector<int> fx_of_ = {};
  std::vector<std::vector<Decimal>> fx_rates_ = {};
  std::vector<std::vector<double>> fx_double_ = {};

  const Security& security(std::int64_t id) const { return *market.security(id); }
  // The close on or before `day` (inside the span), exactly; unset when none.
  std::optional<Decimal> close(std::int64_t id, Date day) const;
  // The same close in `currency`: times that day's rate for a name priced in
  // another currency (exact); unset when there is no close, or no rate yet.
  std::optional<Decimal> value_close(std::int64_t id, Date day) const;
  // The rate into `currency` of the column's currency on the row's day.
  double fx(std::size_t row, int col) const {
    const int k = fx_of_[static_cast<std::size_t>(col)];
    return k < 0 ? 1.0 : fx_double_[static_cast<std::size_t>(k)][row];
  }
  Decimal fx_exact(std::size_t row, int col) const {
    const int k = fx_of_[static_cast<std::size_t>(col)];
    return k < 0 ? Decimal(1) : fx_rates_[static_cast<std::size_t>(k)][row];
  }
  bool foreign(int col) const { return fx_of_[static_cast<std::size_t>(col)] >= 0; }
  // Fills the rates of fx() (load_history does).
  void load_rates();
};

History load_history(store::Database& db, const rules::Rule& rule, Date from, Date to,
                     const std::vector<std::string>& extra = {},
                     rules::Convert convert = rules::Convert::no);
History load_history(store::Database& db, const std::vector<rules::Rule>& rules, Date from, Date to,
                     const std::vector<std::string>& extra = {},
                     rules::Convert convert = rules::Convert::no);

std::vector<Date> rebalance_days(const std::vector<Date>& trading_days, std::optional<Date> next,
                                 Date from, Date to, int every_months);

}  // namespace keel::backtest
