// Track record: over a name's own past, did its score rank its later returns?
// One implementation for `keel propose`, `keel backtest` and `keel signal`.
//
// Contract
//  - Month-ends (month_ends()): the last day with any close of each calendar
//    month, as the back-test rebalances (backtest/history.h).
//  - TrackRecord(rule, inputs, series) scores every month-end t of the
//    series once with the rule's own screen (rules::screen on
//    Inputs::candidates, nothing held): the z of each passing name on t is
//    exactly the one a screen run on t gives. Nothing of a later day is read
//    for t.
//  - at(D, settings): for decision day D, the anchor A is the latest
//    month-end on or before D. Observations are the month-ends t whose
//    month lies in the window_months months ending with A's month and whose
//    horizon ends by A: month(t) > month(A) - window_months and
//    month(t) + horizon_months <= month(A). A pair is (the name's z on t,
//    its forward total return from its close on or before t to its close on
//    or before the month-end horizon_months later); "relative" subtracts the
//    mean of the forward returns of the names scored on t, "zscore"
//    standardises them across those names (sample sd), "absolute" keeps
//    them. The correlation is Pearson's r or Spearman's rho (average ranks)
//    of the pairs, as scipy.stats.pearsonr / spearmanr compute them; unset
//    for fewer than two pairs or no spread on either side.
//  - Forward total returns (ForwardReturns): splits multiply units, cash
//    distributions are added as cash (not reinvested), corporate actions act
//    on the one unit held (ledger/actions.h: unit_effect); a merger or
//    delisting ends the window at what it paid. Doubles: a statistic.
//    When the rule's Inputs convert (Convert::yes), returns are in the
//    rule's currency: closes and cash at each day's rate, point in time.
//  - LedgerTrackRecord loads the series a decision on one day needs
//    (Inputs::series_request from first_day to the day) and attaches the
//    record to the Inputs.
//  - first_day(settings, from): the first day a series must hold for
//    decisions on or after `from`.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <span>
#include <unordered_map>
#include <vector>

#include "core/date.h"
#include "market/series.h"
#include "model/records.h"
#include "rules/engine.h"
#include "rules/inputs.h"
#include "rules/rule.h"
#include "store/database.h"

namespace keel::rules {

// Spearman's rank correlation (average ranks for ties) and Pearson's r;
// nullopt when fewer than two pairs or either side has no spread. Throw
// std::invalid_argument for unequal lengths.
std::optional<double> spearman(std::span<const double> x, std::span<const double> y);
std::optional<double> pearson(std::span<const double> x, std::span<const double> y);

// The last day with any close of each calendar month within [from, to]
// (`next` is the first close day after the series' days).
std::vector<Date> month_ends(const std::vector<Date>& trading_days, std::optional<Date> next,
                             Date from, Date to);

class ForwardReturns {
 public:
  // With `into`, a name priced in another currency is held in `into`: each
  // close is taken at the rate known on its day, and cash paid at the rate
  // of the day it is counted (the ex-date, the action's day); a day without
  // a rate leaves the return unset.
  explicit ForwardReturns(const market::Series& series,
                          std::optional<std::string> into = std::nullopt);
  // Total return of one unit of `id` held from its close on or before
  // `start` to `end`; unset without a positive start close or an end value.
  std::optional<double> operator()(std::int64_t id, Date start, Date end) const;

 private:
  struct Event {
    Date day;
    int rank = 0;       // 0 split, 1 corporate action, 2 distribution
    double amount = 0;  // ratio, or cash per unit
    const CorporateAction* action = nullptr;
  };
  double price(std::int64_t id, Date day) const;
  // The rate of `id`'s currency into `into_` on `day` (1 without `into_`, NaN
  // without a rate).
  double rate(std::int64_t id, Date day) const;
  const market::Series& m_;
  std::optional<std::string> into_;
  std::unordered_map<std::int64_t, std::vector<Event>> events_;
};

class TrackRecord {
 public:
  TrackRecord(const Rule& rule, const Inputs& inputs, const market::Series& series);

  // Every universe name scored on some month-end, with its track record
  // for decision day `day`.
  std::unordered_map<std::int64_t, TrackStat> at(Date day, const TrackRecordRule& settings) const;
  std::unordered_map<std::int64_t, TrackStat> at(Date day) const {
    return at(day, *rule_.track_record);
  }

  static Date first_day(const TrackRecordRule& settings, Date from);

 private:
  static int month_of(Date d) { return d.year() * 12 + d.month() - 1; }
  // Forward returns of the names scored on month-end k over `months`,
  // adjusted as `mode` says; cached.
  const std::unordered_map<std::int64_t, double>& returns(std::size_t k, int months,
                                                          TrackReturns mode) const;

  const Rule& rule_;
  ForwardReturns forward_;
  std::vector<Date> ends_;                                   // month-ends, ascending
  std::map<int, std::size_t> by_month_;                      // month index -> position in ends_
  std::vector<std::unordered_map<std::int64_t, double>> z_;  // per month-end
  std::vector<std::int64_t> scored_;  // every name with a z on some month-end
  mutable std::map<std::tuple<std::size_t, int, int>, std::unordered_map<std::int64_t, double>>
      cache_;
};

// A track record for decisions on one day (`keel propose`), on a series of
// its own read from the ledger, attached to `inputs` for its lifetime.
class LedgerTrackRecord {
 public:
  LedgerTrackRecord(store::Database& db, const Rule& rule, Inputs& inputs,
                    const market::View& catalog, Date day);
  LedgerTrackRecord(const LedgerTrackRecord&) = delete;
  LedgerTrackRecord& operator=(const LedgerTrackRecord&) = delete;

 private:
  market::Series series_;
  TrackRecord record_;
};

}  // namespace keel::rules
