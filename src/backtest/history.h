// History: everything a back-test or a signal check may read, loaded once
// from the ledger as a market::Series, with point-in-time accessors.
//
// Contract
//  - load_history() resolves the rule's universe and sleeves against the
//    ledger exactly as `keel propose` does (every stock not a sleeve, a
//    sector's stocks, or a fixed list) and preloads, over [from, to], the
//    closes of the universe, the sleeves and the `extra` symbols that the
//    ledger holds (a benchmark), the rule's metric, splits and cash
//    distributions (market/series.h). A universe, sleeve or metric the
//    ledger does not hold is an InputError located at the rule key
//    (Rule::fail).
//  - candidates(d) gives the engine what was knowable on day d and nothing
//    later: the figure with known_on <= d (latest period, then latest
//    known_on), and whether a close exists on or before d. Days asked must
//    not go back in time between calls (the figures advance by a pointer).
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
#include <unordered_set>
#include <vector>

#include "core/date.h"
#include "market/series.h"
#include "rules/engine.h"
#include "rules/rule.h"
#include "store/database.h"

namespace keel::backtest {

struct History {
  std::vector<std::int64_t> universe;    // by symbol
  std::vector<std::int64_t> sleeve_ids;  // in the rule's order
  std::string metric;
  market::Series market;
  mutable market::Series::FigureCursor figures;

  const Security& security(std::int64_t id) const { return *market.security(id); }
  // The close on or before `day` (inside the span), exactly; unset when none.
  std::optional<Decimal> close(std::int64_t id, Date day) const;
  std::vector<rules::Candidate> candidates(Date day,
                                           const std::unordered_set<std::int64_t>& held) const;
};

History load_history(store::Database& db, const rules::Rule& rule, Date from, Date to,
                     const std::vector<std::string>& extra = {});

std::vector<Date> rebalance_days(const std::vector<Date>& trading_days, std::optional<Date> next,
                                 Date from, Date to, int every_months);

}  // namespace keel::backtest
