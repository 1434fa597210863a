// The rule engine: screen, targets and orders on plain values, with no ledger
// access, so a proposal and a back-test run exactly the same steps.
//
// screen(): every candidate gets a line. A name passes when it has a figure
//   known on the as-of day, that figure's period is at most max_age_days old,
//   (optionally) its value is above zero, and it has a close to trade at.
//   Passing values are winsorized when asked (percentiles by linear
//   interpolation between order statistics, numpy/pandas' default), then
//   z = (x - mean) / sd with the sample sd (n - 1); z is negated when high
//   values are cheap, so low z is always cheap. Selection then marks names:
//   z <= z_max, the cheapest `count`, or the cheapest ceil(top_pct % of n);
//   a held name that passes but is not selected stays while z <= exit_z.
//   Several metrics (screen.metrics): each is checked (known, not stale,
//   positive) and scored as above on its own; a name lacking one fails, or
//   (if_missing = "score_available") is scored on the metrics it has. With
//   screen.within the z of each metric runs within each group (sector or
//   country) of at least min_group_size passing names; smaller groups fail,
//   or (small_groups = "whole_universe") take z's from every passing name.
//   The score is then the weighted mean of the metric z's, standardised
//   again across the passing names; one metric without groups is the plain
//   z above.
//   With a [track_record], a passing name is selectable only when its track
//   record has at least min_observations pairs and a correlation at most
//   max_correlation (its z is computed across every passing name all the
//   same, so a name's past z's do not depend on its past track records).
//   Fewer than min_names passing, no spread, or nothing selected is a normal
//   result: `refusal` names the rule key and says why, and nothing is
//   selected.
// targets(): weights (fractions of the invested value) for sleeves and
//   selected names: equal, or raw exp(-tilt * z) normalized; a cap per name
//   with the excess shared among the others in proportion. Held names that are
//   not selected get weight 0 with the reason. A refused screen, or weights
//   that cannot add up to one, give no targets and the refusal.
// orders(): turns targets into orders for a portfolio (cash and holdings per
//   account) at given prices, in the named steps of rules/order_steps.h. Sells come first, then
//   buys that fit each account's cash above its reserve after estimated fees; quantities are
//   rounded down to the security's lot size (or 10^-4 units when fractional).
//   Never sells more than held nor spends more cash than an account has.
//   A plan's preferences (HouseholdPrefs, see rules/order_steps.h) may steer
//   which account buys and sells, cap the estimated realized gain in taxable
//   accounts, and raise the cash an account must give by selling in it.
//   Money is exact (Decimal); doubles appear only in the z statistics.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <set>
#include <string>
#include <unordered_map>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "model/records.h"
#include "rules/rule.h"

namespace keel::rules {

// A figure as known on the as-of day (see market/view.h).
struct Figure {
  Decimal value;
  Date period;    // the period the figure is for
  Date known_on;  // the first day it could be known
};

// A name's track record on a day (rules/track_record.h): the correlation of
// its past scores with its later returns, and how many pairs it rests on.
struct TrackStat {
  std::optional<double> correlation;  // unset when either side had no spread
  int observations = 0;
};

// Candidate and ScreenLine have a constructor of their own (every member has
// its default here): value-initialization, as std::vector's emplace_back()
// does it, then skips zeroing the record before constructing it. A screen
// builds a thousand of each every month of a back-test.
struct Candidate {
  Candidate() {}  // NOLINT(modernize-use-equals-default): see above
  std::int64_t security_id = 0;
  std::string symbol;
  std::optional<Figure> figure;
  bool has_price = false;  // a close on or before the as-of day
  bool held = false;       // some account of the pool holds it
  // Off the market (a merger or delisting) since this day.
  std::optional<Date> ended;
  std::optional<TrackStat> track;  // set when the rule has a [track_record]
  // The figures of the screen's further metrics (ScreenRule::metrics() after
  // the first), in order; empty for a screen of one metric.
  std::vector<std::optional<Figure>> more;
  // The name's value of the field the screen groups by (screen.within).
  std::optional<std::string> group;
  // Why it cannot be priced in the rule's currency on the day (no exchange
  // rate); set only with has_price false, and then the screen's reason.
  std::string unpriced_why = {};
};

struct ScreenLine {
  ScreenLine() {}  // NOLINT(modernize-use-equals-default): see Candidate
  std::int64_t security_id = 0;
  std::string symbol;
  std::optional<Figure> figure;
  int age_days = 0;             // as-of minus the figure's period
  std::optional<double> value;  // the value z is computed from (after winsorizing)
  std::optional<double> z;      // oriented: low = cheap
  bool held = false;
  bool passed = false;
  std::optional<TrackStat> track;
  bool track_ok = true;  // false: the track record keeps it from being selected
  // A screen of several metrics, or within groups: each metric's value (after
  // winsorizing) and oriented z, in ScreenRule::metrics() order; `value` is
  // then the weighted mean of these z's.
  std::vector<std::optional<double>> metric_values, metric_z;
  std::optional<std::string> group;  // the name's sector or country (screen.within)
  bool selected = false;
  std::string excluded_reason;  // why it did not pass; empty when it passed
  std::string note;             // why it is, or is not, selected
};

// Why a rule holds nothing on a day: the rule key responsible and the reason.
struct Refusal {
  std::string key;
  std::string why;
  // "FILE:LINE: key 'KEY': WHY", as Rule::fail words it.
  std::string text(const Rule& rule) const;
};

struct ScreenResult {
  Date as_of;
  bool explained = true;           // notes and reasons were written (Explain::all)
  std::optional<Refusal> refusal;  // set when the screen selects nothing
  std::vector<ScreenLine> lines;   // passing names by z (then symbol), then the rest by symbol
  std::size_t passed = 0;
  std::size_t selected = 0;
  double mean = 0, sd = 0;  // of the values z is computed from
  std::optional<double> clip_low, clip_high;
  // A screen of several metrics across the universe: each metric's figures.
  struct MetricStat {
    std::string name;
    double mean = 0, sd = 0;
    std::optional<double> clip_low, clip_high;
  };
  std::vector<MetricStat> metrics;
  // A screen of several metrics, or within groups: the metrics' names (the
  // order of ScreenLine::metric_z) and the field grouped by ("" for none).
  std::vector<std::string> scored_metrics;
  std::string within;
};

// Explain::none leaves the notes and reasons of the lines (and the targets'
// `why`) empty: for runs that only need the selection, many days over.
enum class Explain { all, none };
ScreenResult screen(const Rule& rule, Date as_of, std::vector<Candidate> candidates,
                    Explain explain = Explain::all);

struct Target {
  std::int64_t security_id = 0;
  std::string symbol;
  Decimal weight;  // fraction of the invested value (pool less cash reserves)
  bool sleeve = false;
  std::optional<double> z;
  bool held = false;
  std::string why;  // "z = -1.32 <= -0.50", "sleeve at 20%", "excluded: ..."
};

struct Targets {
  std::vector<Target> list;  // sleeves first, then selected names by z, then zero-weight exits
  std::optional<Refusal> refusal;  // the screen's, or weights that cannot add up; list is empty
};

Targets targets(const Rule& rule, const ScreenResult& screened,
                const std::vector<std::int64_t>& sleeve_ids);

// ---------------------------------------------------------------- orders

struct LotState {
  std::int64_t lot_id = 0;
  Date acquired;
  Decimal quantity;
  Decimal cost;  // total basis of the lot
};

struct HoldingState {
  Decimal quantity;
  std::vector<LotState> lots;  // optional; when given, sells report the lots taken
};

struct AccountState {
  std::int64_t id = 0;
  std::string name;
  TaxStatus tax = TaxStatus::taxable;  // on the as-of day
  Decimal cash;
  std::unordered_map<std::int64_t, HoldingState> holdings;  // by security id
};

struct Portfolio {
  std::vector<AccountState> accounts;
};

// A price converted from the security's own currency into the pool's.
struct QuoteFx {
  std::string currency;   // the security's
  Decimal local_price;    // in `currency`
  Decimal rate;           // pool currency units per `currency` unit
  bool derived = false;   // inverted or crossed, not a stored row
  std::string rate_text;  // market::FxQuote::describe()
};

struct Quote {
  std::string symbol;
  Decimal price;         // close on or before the as-of day, else the last trade price
  bool tradable = true;  // false: no close; valued, never traded
  Decimal lot_size{1};
  std::optional<QuoteFx> fx = std::nullopt;  // set when `price` is converted
};
using Quotes = std::unordered_map<std::int64_t, Quote>;

enum class Side { buy, sell };
std::string_view to_string(Side side);

struct LotTake {
  std::int64_t lot_id = 0;
  Date acquired;
  Decimal quantity;
  Decimal cost;      // basis of the part taken, to the cent
  Decimal est_gain;  // quantity x price - cost, before fees
  bool long_term = false;
};

struct Order {
  std::int64_t account_id = 0;
  std::string account;
  std::int64_t security_id = 0;
  std::string symbol;
  Side side = Side::buy;
  Decimal quantity;
  Decimal price;                      // estimate: the quote
  Decimal value;                      // quantity x price
  Decimal fee;                        // estimate
  Decimal weight_now, weight_target;  // fractions of the pool, 6 places
  std::string reason;
  std::vector<LotTake> lots;  // sells, when lots were given
  // A security in another currency than the pool's (rules/fx_orders.h).
  struct Fx {
    QuoteFx quote;
    Decimal local_value;  // quantity x local price
    // Buys: the local units paid from cash in that currency, and the rest,
    // settled in the account's currency (`settles_in`) for about `settled`.
    // Sells: the proceeds kept in that currency (`from_cash`).
    Decimal from_cash, local_settled, settled;
    std::string settles_in;  // the account's currency; empty when nothing settles
  };
  std::optional<Fx> fx = std::nullopt;
};

struct Skipped {
  std::string symbol;
  std::string why;
};

struct WeightAfter {
  std::int64_t security_id = 0;
  std::string symbol;
  Decimal value;
  Decimal weight;  // of the pool after the orders, 6 places
  Decimal target;  // of the pool, 6 places
};

struct CashAfter {
  std::string account;
  Decimal cash;
  Decimal reserve;
};

struct OrderPlan {
  Decimal pool_value;
  Decimal invested_target;    // pool less cash reserves
  std::vector<Order> orders;  // sells first
  std::vector<WeightAfter> weights_after;
  std::vector<CashAfter> cash_after;
  Decimal cash_after_total;
  Decimal turnover;  // (bought + sold) / 2 / pool, 6 places
  Decimal estimated_fees;
  std::vector<Skipped> skipped;
};

// What a household plan adds to the orders (plan keys, docs/plan.md). The
// defaults change nothing.
struct HouseholdPrefs {
  // Securities whose buys go to tax-deferred accounts first (part.place).
  std::set<std::int64_t> place_deferred;
  // Sells taken from accounts that are not taxable before taxable ones (tax.sell_from).
  bool sell_deferred_first = false;
  // The most net estimated gain (before fees) the sells may realize in
  // taxable accounts; losses taken first make room (tax.gain_cap).
  std::optional<Decimal> gain_cap;
  // Cash an account must give (a planned withdrawal): when its cash is
  // below zero, sells in it raise the shortfall, in the order the keys prefer.
  std::map<std::int64_t, Decimal> must_give;  // account id -> amount
  // Cash an account's buys may not spend, beyond its reserve: what the
  // currency conversions of its orders cost (rules/fx_orders.h).
  std::map<std::int64_t, Decimal> withheld;  // account id -> amount
  bool tax_keys() const { return !place_deferred.empty() || sell_deferred_first || gain_cap; }
};

// Explain::none leaves the orders' reasons and the skips' words empty.
OrderPlan orders(const Portfolio& portfolio, const std::vector<Target>& targets,
                 const Quotes& quotes, const TradingRule& trading, Date as_of,
                 Explain explain = Explain::all, const HouseholdPrefs& prefs = {});

// Applies orders to a portfolio at their estimated prices and fees (for a
// back-test, or to check a plan): quantities and cash move; lots are not kept.
Portfolio apply(const Portfolio& portfolio, const std::vector<Order>& orders);

}  // namespace keel::rules
