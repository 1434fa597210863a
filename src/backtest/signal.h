// Signal check: does the rule's score rank the names' later returns?
//
// Contract
//  - At each rebalancing day d (history.h: rebalance_days with the rule's
//    rebalance_months) the engine's screen (rules::screen, nothing held)
//    scores the passing names from figures with known_on <= d and closes on
//    or before d. Each name's forward total return over h months runs from
//    its close on or before d to its close on or before the last trading day
//    of the month h months later, which must not be after `to`: splits
//    multiply the units, cash distributions (ex-date in the window) are added
//    as cash, not reinvested. Corporate actions in the window act on the one
//    unit held as on the back-test's pool (ledger/actions.h: unit_effect, no
//    rounding): a stock dividend adds units, a return of capital adds cash, a
//    spin-off's units are valued at their close on the window's last day. A
//    merger or delisting ends the name's window on its day: the final value
//    is the cash it paid plus the acquirer's units at their close on that
//    day. A name off the market at the start is not screened at all. A
//    forward return is only ever paired with the score known at its start.
//  - Across currencies (a ledger with a currency of its own): names priced in
//    other currencies are screened and ranked too, with forward returns in
//    the ledger's currency (rules::ForwardReturns: each close and each cash
//    amount at its day's rate, point in time), and so is the track record; a
//    note names the currencies converted.
//  - Information coefficient (IC) of a day: Spearman's rank correlation of z
//    with the forward return (average ranks for ties; Pearson's r of the
//    ranks), as scipy.stats.spearmanr computes it.
//  - Sign convention: low z is cheap. A rule whose cheap names do better has
//    a NEGATIVE IC; share_expected_sign counts the days with IC < 0.
//  - Spread of a day: mean forward return of the cheapest fifth by z (floor(n/5)
//    names, at least one) minus that of the dearest fifth.
//  - Quintiles of a day: the names in z order (cheapest first), name i of n
//    in quintile floor(5 i / n); each quintile's mean forward return (unset
//    for an empty one, as with fewer than five names).
//  - Per horizon: mean IC, its standard error sd / sqrt(days) and
//    t-statistic mean / standard error with the sample sd (nullopt for fewer
//    than two days or no spread), the share of days with the expected sign,
//    the mean spread, and each quintile's mean over the days it is set. A day on which the
//    rule selects nothing still counts (the coefficient does not depend on
//    the threshold); days without z's (too few names, no spread) are skipped
//    with a note. With a [track_record], only names it lets through are
//    paired (rules/track_record.h, point in time).
//  - by_name: each universe name's track record (rules/track_record.h) on
//    `to`, per horizon (the request's, and the rule's [track_record] horizon
//    when it has one): the pairs of every month-end in [from, to] whose
//    horizon ends by `to`, with the rule's method and returns (else Pearson's
//    r of relative returns).
//  - Throws InputError naming the option for from > to, or a horizon outside
//    1..240 months.
#pragma once

#include <array>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "backtest/history.h"
#include "rules/rule.h"
#include "rules/track_record.h"
#include "store/database.h"

namespace keel::backtest {

struct SignalRequest {
  Date from;
  Date to;
  std::vector<int> horizons{1, 3, 6, 12, 24};
  bool by_name = false;  // also each name's track record per horizon
};

// A name's track record over the whole check, per horizon (in the order of
// SignalResult::by_name_horizons).
struct NameRecord {
  std::int64_t security_id = 0;
  std::string symbol;
  std::vector<rules::TrackStat> records;
};

struct SignalDay {
  Date day;
  Date end;
  int names = 0;
  std::optional<double> ic;  // nullopt when the ranks have no spread
  double spread = 0;
  std::array<std::optional<double>, 5> quintiles;  // cheapest first
};

struct HorizonResult {
  int months = 0;
  std::vector<SignalDay> days;
  int ic_days = 0;
  std::optional<double> mean_ic, ic_standard_error, t_stat, share_expected_sign, mean_spread;
  std::array<std::optional<double>, 5> quintile_means;  // cheapest first
};

struct SignalResult {
  std::string rule_name;
  Date from, to;
  std::vector<HorizonResult> horizons;
  std::vector<int> by_name_horizons;
  std::vector<NameRecord> by_name;  // by symbol; empty unless asked
  std::vector<std::string> notes;
  std::vector<std::string> cautions;
};

SignalResult signal(store::Database& db, const rules::Rule& rule, const SignalRequest& request);
// The same on preloaded history spanning [from, to].
SignalResult signal(const History& history, const rules::Rule& rule, const SignalRequest& request);

// Each quintile's mean of `returns`, given in z order (cheapest first):
// element i of n in quintile floor(5 i / n); unset for an empty quintile.
std::array<std::optional<double>, 5> quintile_means(std::span<const double> returns);

// Spearman's rank correlation (rules/track_record.h).
using rules::spearman;

}  // namespace keel::backtest
