// View: what the market data of a ledger said, as it was known on a day.
// Every reader of closes, figures, distributions and splits goes through
// this one contract; tests/unit/market_view_test.cpp runs the same cases
// against each implementation.
//
// Contract
//  - close(S, D): the close of S on D or, failing that, the latest before D,
//    with the day it is from; unset when S has no close on or before D.
//    Closes are as traded (not adjusted for splits or distributions).
//  - figure(S, M, D): among the figures of metric M for S whose known_on is
//    on or before D, the latest period; for that period the latest known_on
//    (a restatement replaces a figure from its known_on on). A figure known
//    after D is invisible on D, whatever its period.
//  - distributions(S, from, to) and splits(S, from, to): the events of S (of
//    every security when S is unset) dated in [from, to] (ex-date for a
//    distribution), weekends included, by date and then security id.
//  - securities(): every security of the ledger, by symbol; sectors(): the
//    distinct sectors of its stocks, ascending; metric_names(): the metrics
//    with any stored figure, ascending.
//  - rate(B, Q, D): how many Q one B bought as known on D, the latest stored
//    rate on or before D (market/fx_rates.h): from a row of B/Q (direct), of
//    Q/B (inverted) or through one pivot currency (crossed); a derived rate
//    says so. B to itself is 1 (FxHow::same); no other rate is ever assumed.
//    convert(A, from, to, D): A in `from` as `to` at that rate, rounded once,
//    half-to-even, to the minor units of `to` (unchanged when from == to).
//    Both throw InputError "no exchange rate for EUR/USD on or before
//    2024-03-01 ..." when no rate can be found.
//  - Implementations: market::DayView (market/day_view.h) reads the ledger
//    for each question, for a few names on one day; market::Series
//    (market/series.h) is preloaded for a set of securities and a span of
//    days, and answers only inside them (std::out_of_range otherwise).
//  - Calls are const but may fill caches: a view is not shared between
//    threads.
//
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "market/fx_rates.h"
#include "model/records.h"
#include "model/security.h"

namespace keel::market {

struct Close {
  Date day;  // the day the close is from, on or before the day asked
  Decimal price;
  friend bool operator==(const Close&, const Close&) = default;
};

struct Figure {
  Decimal value;
  Date period;    // the period the figure is for
  Date known_on;  // the first day it could be known
  friend bool operator==(const Figure&, const Figure&) = default;
};

struct Distribution {
  std::int64_t security_id = 0;
  Date ex_date;
  Date pay_date;
  Decimal per_share;  // cash per unit held at the start of the ex-date
  friend bool operator==(const Distribution&, const Distribution&) = default;
};

struct SplitEvent {
  std::int64_t security_id = 0;
  Date date;
  Decimal ratio;  // new units per old unit, applied at the start of `date`
  friend bool operator==(const SplitEvent&, const SplitEvent&) = default;
};

class View {
 public:
  virtual ~View() = default;

  virtual std::optional<Close> close(std::int64_t security_id, Date day) const = 0;
  // Whether close() has an answer; cheaper where a view can tell without one.
  virtual bool has_close(std::int64_t security_id, Date day) const {
    return close(security_id, day).has_value();
  }
  virtual std::optional<Figure> figure(std::int64_t security_id, std::string_view metric,
                                       Date day) const = 0;
  virtual std::vector<Distribution> distributions(std::optional<std::int64_t> security_id,
                                                  Date from, Date to) const = 0;
  virtual std::vector<SplitEvent> splits(std::optional<std::int64_t> security_id, Date from,
                                         Date to) const = 0;

  // Corporate actions (ledger/actions.h says what each kind does).
  //  - actions(S, from, to): the live actions of S (of every security when S
  //    is unset; voided actions and the voids themselves left out) dated in
  //    [from, to], by date and then id. An action takes effect at the start
  //    of its day, after that day's splits.
  //  - ended(S, D): the day of a live merger or delisting of S dated on or
  //    before D (S is off the market from that day on); unset when none.
  virtual std::vector<CorporateAction> actions(std::optional<std::int64_t> security_id, Date from,
                                               Date to) const = 0;
  virtual std::optional<Date> ended(std::int64_t security_id, Date day) const = 0;

  virtual const std::vector<Security>& securities() const = 0;
  virtual std::vector<std::string> sectors() const;
  virtual std::vector<std::string> metric_names() const = 0;

  FxQuote rate(const std::string& base, const std::string& quote, Date day) const;
  // rate() without the throw: unset when no rate can be found.
  std::optional<FxQuote> try_rate(const std::string& base, const std::string& quote,
                                  Date day) const;
  Decimal convert(const Decimal& amount, const std::string& from, const std::string& to,
                  Date day) const;

  // The security with this id or symbol; nullptr when the ledger has none.
  const Security* security(std::int64_t id) const;
  const Security* security(std::string_view symbol) const;

 protected:
  // The stored rates that answer rate(B, Q, D); an implementation may throw
  // std::out_of_range for what it has not loaded.
  virtual const FxRates& rates_for(const std::string& base, const std::string& quote,
                                   Date day) const = 0;

 private:
  void index() const;
  // Positions in securities(), filled on first use.
  mutable std::map<std::int64_t, std::size_t> by_id_;
  mutable std::map<std::string, std::size_t, std::less<>> by_symbol_;
};

// Shared by the implementations: the actions of `live` (in force, by date
// and id) for actions() and ended().
std::vector<CorporateAction> actions_between(const std::vector<CorporateAction>& live,
                                             std::optional<std::int64_t> security_id, Date from,
                                             Date to);
std::optional<Date> end_of(const std::vector<CorporateAction>& live, std::int64_t security_id,
                           Date day);

}  // namespace keel::market
