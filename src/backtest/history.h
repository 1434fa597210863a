// History: everything a back-test or a signal check may read, loaded once
// from the ledger, with point-in-time accessors.
//
// Contract
//  - load_history() resolves the rule's universe and sleeves against the
//    ledger exactly as `keel propose` does (every stock not a sleeve, a
//    sector's stocks, or a fixed list) and preloads closes (store::PriceBook),
//    the rule's metric (store::MetricHistory), splits and cash distributions.
//    A universe, sleeve or metric the ledger does not hold is an InputError
//    located at the rule key (Rule::fail). The rule trades in one currency
//    (rules::keep_currency): the ledger's when it has one, else the first
//    sleeve's, else the one its universe shares; with none of these, a
//    universe in several currencies is refused.
//  - candidates(d) gives the engine what was knowable on day d and nothing
//    later: the figure with known_on <= d (latest period, then latest
//    known_on), and whether a close exists on or before d.
//  - rebalance_days(): the last day with any close of each calendar month
//    (over every close in the ledger), kept when inside [from, to], then
//    every k-th of them starting with the first.
//  - Prices are closes as traded (not adjusted); a split's ratio applies to
//    holdings at the start of its date.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <unordered_map>
#include <unordered_set>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "model/security.h"
#include "rules/engine.h"
#include "rules/rule.h"
#include "store/database.h"
#include "store/market_data.h"
#include "store/prices.h"

namespace keel::backtest {

struct Distribution {
  std::int64_t security_id = 0;
  Date ex_date;
  Date pay_date;
  Decimal per_share;  // cash per unit held at the start of the ex-date
};

struct SplitEvent {
  std::int64_t security_id = 0;
  Decimal ratio;  // new units per old unit
};

struct History {
  std::vector<Security> securities;
  std::unordered_map<std::int64_t, std::size_t> index;  // security id -> securities[i]
  std::vector<std::int64_t> universe;                   // by symbol
  std::vector<std::int64_t> sleeve_ids;                 // in the rule's order
  store::PriceBook prices;
  store::MetricHistory metric;
  std::vector<Date> days;                                   // every day with a close
  std::map<Date, std::vector<SplitEvent>> splits;           // by date
  std::map<Date, std::vector<Distribution>> distributions;  // by ex-date
  std::vector<std::string> notes;                           // about the universe

  const Security& security(std::int64_t id) const { return securities.at(index.at(id)); }
  std::vector<rules::Candidate> candidates(const rules::Rule& rule, Date day,
                                           const std::unordered_set<std::int64_t>& held) const;
};

History load_history(store::Database& db, const rules::Rule& rule);

std::vector<Date> rebalance_days(const std::vector<Date>& trading_days, Date from, Date to,
                                 int every_months);

}  // namespace keel::backtest
