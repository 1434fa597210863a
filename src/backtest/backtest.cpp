#include "backtest/backtest.h"

#include <fmt/format.h>

#include <algorithm>
#include <limits>
#include <memory>
#include <set>
#include <stdexcept>
#include <type_traits>

#include "core/error.h"
#include "core/text.h"
#include "ledger/actions.h"
#include "rules/inputs.h"
#include "rules/order_rounds.h"
#include "rules/track_record.h"

namespace keel::backtest {
namespace {

// Frictionless units checked exactly are kept to this many places: far below
// any price's cent (see Request::exact_frictionless).
constexpr int kUnitPlaces = 20;

// A double as a Decimal with 10 places (the simulated values shown): the
// decimal that fmt's "{:.10f}" prints, without formatting (core/decimal.h:
// Decimal::of_double).
Decimal decimal_of(double x) {
  return Decimal::of_double(x, 10);
}

struct Owed {
  Date pay;
  Decimal amount;
};

// How the frictionless pool counts: in binary doubles (the run), or in exact
// decimals with units to kUnitPlaces (the check that the doubles agree).
struct Binary {
  using Num = double;
  static double price(const History& h, std::size_t row, int col) {
    return h.market.value(row, col) * h.fx(row, col);
  }
  static double from(const Decimal& d) { return d.to_double(); }
  static double quotient(double a, double b) { return a / b; }
  static double to_double(double x) { return x; }
  static Decimal to_decimal(double x) { return decimal_of(x); }
  static bool positive(double x) { return x > 0; }
};
struct Exact {
  using Num = Decimal;
  static Decimal price(const History& h, std::size_t row, int col) {
    return h.foreign(col) ? h.market.exact(row, col) * h.fx_exact(row, col)
                          : h.market.exact(row, col);
  }
  static Decimal from(const Decimal& d) { return d; }
  static Decimal quotient(const Decimal& a, const Decimal& b) {
    return Decimal::divide(a, b, kUnitPlaces);
  }
  static double to_double(const Decimal& x) { return x.to_double(); }
  static Decimal to_decimal(const Decimal& x) { return x; }
  static bool positive(const Decimal& x) { return x.is_positive(); }
};

// Columns held, in the order bought, with a per-column position for lookups
// by column.
struct Held {
  std::vector<int> columns;
  std::vector<int> slot;  // per column: index into `columns`, or -1
  explicit Held(int n) : slot(static_cast<std::size_t>(n), -1) {}
  bool has(int c) const { return slot[static_cast<std::size_t>(c)] >= 0; }
  void add(int c) {
    if (has(c)) return;
    slot[static_cast<std::size_t>(c)] = static_cast<int>(columns.size());
    columns.push_back(c);
  }
  void remove(int c) {
    if (!has(c)) return;
    columns.erase(columns.begin() + slot[static_cast<std::size_t>(c)]);
    slot[static_cast<std::size_t>(c)] = -1;
    for (std::size_t i = 0; i < columns.size(); ++i)
      slot[static_cast<std::size_t>(columns[i])] = static_cast<int>(i);
  }
  void clear() {
    for (const int c : columns) slot[static_cast<std::size_t>(c)] = -1;
    columns.clear();
  }
  std::set<std::int64_t> ids(const market::Series& m) const {
    std::set<std::int64_t> out;
    for (const int c : columns) out.insert(m.security_id(c));
    return out;
  }
};

// The column of what a merger or spin-off hands out (load_history loads it).
int target_column(const market::Series& m, const CorporateAction& a) {
  const int t = a.target_id ? m.column(*a.target_id) : -1;
  if (t < 0)
    throw std::logic_error(
        fmt::format("backtest: the target of corporate action {} is not loaded", a.id));
  return t;
}

// Selection on a rebalancing day: the engine's targets, or why there are none.
struct Selection {
  std::size_t passed = 0, selected = 0;
  std::vector<rules::Target> targets;
  std::optional<std::string> none;  // why nothing is held
};

Selection select(const History& h, const rules::Inputs& inputs, const rules::Rule& rule, Date day,
                 const std::set<std::int64_t>& held) {
  auto chosen = inputs.select(h.market, day, held, rules::Explain::none);
  Selection out;
  out.passed = chosen.screen.passed;
  out.selected = chosen.screen.selected;
  out.targets = std::move(chosen.targets);
  if (chosen.refusal) out.none = chosen.refusal->text(rule);
  return out;
}

// The frictionless pool: fully invested at the targets' weights, units in P.
template <typename P>
class FrictionlessPool {
 public:
  using Num = typename P::Num;
  FrictionlessPool(const History& h, const Decimal& start, bool keep_trades)
      : h_(h),
        keep_trades_(keep_trades),
        held_(h.market.columns()),
        units_(static_cast<std::size_t>(h.market.columns())),
        cash_(P::from(start)) {}

  void split(int c, const Decimal& ratio) {
    if (held_.has(c)) unit(c) = unit(c) * P::from(ratio);
  }
  // Reinvested in the same security at the day's close.
  void distribute(int c, const market::Distribution& d, std::size_t row) {
    if (!held_.has(c)) return;
    // In the pool's currency at the day's rate; reinvested at the close.
    const Num amount = unit(c) * P::from(d.per_share) * P::from(h_.fx_exact(row, c));
    distributions_ += amount;
    unit(c) = unit(c) + P::quotient(amount, P::price(h_, row, c));
  }
  // A corporate action at the start of its day (ledger/actions.h:
  // unit_effect); fractions are kept, so no cash in lieu. Its cash waits in
  // the pool for the next rebalancing day.
  void act(const CorporateAction& a, std::size_t row) {
    const int c = h_.market.column(a.security_id);
    if (!held_.has(c)) return;
    const UnitEffect e = unit_effect(a);
    const Num held = unit(c);
    if (!e.target_units.is_zero()) {
      const int t = target_column(h_.market, a);
      unit(t) = (held_.has(t) ? unit(t) : Num{}) + held * P::from(e.target_units);
      held_.add(t);
    }
    if (!e.cash.is_zero()) cash_ += held * P::from(e.cash) * P::from(h_.fx_exact(row, c));
    if (e.keeps.is_zero()) {
      unit(c) = Num{};
      held_.remove(c);
    } else if (e.keeps != Decimal(1)) {
      unit(c) = held * P::from(e.keeps);
    }
  }
  void pay(Date) {}
  Num holdings(std::size_t row) const {
    Num v{};
    for (const int c : held_.columns) v += unit(c) * P::price(h_, row, c);
    return v;
  }
  double value(std::size_t row) const { return P::to_double(cash_ + holdings(row)); }
  Decimal value_decimal(std::size_t row) const { return P::to_decimal(cash_ + holdings(row)); }
  Decimal cash() const { return P::to_decimal(cash_); }
  int names() const { return static_cast<int>(held_.columns.size()); }
  Decimal distributions() const { return P::to_decimal(distributions_); }
  std::set<std::int64_t> held() const { return held_.ids(h_.market); }

  void rebalance(const Selection& sel, std::size_t row, RebalanceDay& rd) {
    const Num value = cash_ + holdings(row);
    rd.value_before = P::to_decimal(value);
    Decimal weight_sum;
    for (const auto& t : sel.targets)
      if (t.weight.is_positive()) weight_sum += t.weight;
    std::vector<std::pair<int, Num>> next;  // (column, units)
    if (weight_sum.is_positive()) {
      const Num scale = P::from(weight_sum);
      for (const auto& t : sel.targets) {
        if (!t.weight.is_positive()) continue;
        const int c = h_.market.column(t.security_id);
        next.emplace_back(c, P::quotient(value * P::from(t.weight), scale * P::price(h_, row, c)));
      }
    }
    // Trades by security id (columns ascend by id).
    std::vector<int> touched = held_.columns;
    for (const auto& [c, q] : next) touched.push_back(c);
    std::sort(touched.begin(), touched.end());
    touched.erase(std::unique(touched.begin(), touched.end()), touched.end());
    std::vector<Num> after(touched.size());
    for (const auto& [c, q] : next)
      after[static_cast<std::size_t>(std::lower_bound(touched.begin(), touched.end(), c) -
                                     touched.begin())] += q;
    Num invested{}, traded{};
    for (std::size_t i = 0; i < touched.size(); ++i) {
      const int c = touched[i];
      const Num price = P::price(h_, row, c);
      const Num before = held_.has(c) ? unit(c) : Num{};
      invested += after[i] * price;
      const Num diff = after[i] - before;
      if (diff == Num{}) continue;
      const Num size = P::positive(diff) ? diff : Num{} - diff;
      traded += size * price;
      if (!keep_trades_) continue;
      const auto side = P::positive(diff) ? rules::Side::buy : rules::Side::sell;
      if constexpr (std::is_same_v<Num, double>)
        rd.shifts.push_back(
            Shift{h_.market.security_id(c), side, size, price, h_.market.price_places(c)});
      else
        rd.trades.push_back(Trade{h_.market.security_id(c), side, size, price, Decimal()});
    }
    for (const int c : held_.columns) unit(c) = Num{};
    held_.clear();
    for (std::size_t i = 0; i < touched.size(); ++i)
      if (P::positive(after[i])) {
        held_.add(touched[i]);
        unit(touched[i]) = after[i];
      }
    rd.traded = P::to_decimal(traded);
    cash_ = value - invested;
  }

 private:
  Num& unit(int c) { return units_[static_cast<std::size_t>(c)]; }
  const Num& unit(int c) const { return units_[static_cast<std::size_t>(c)]; }
  const History& h_;
  bool keep_trades_;
  Held held_;
  std::vector<Num> units_;  // per column; zero when not held
  Num cash_;
  Num distributions_{};
};

// The pool with the rule's orders: fills, fees, cash and units exact; its
// value each day in doubles.
class OrderPool {
 public:
  OrderPool(const History& h, const rules::Inputs& inputs, const rules::Rule& rule,
            const Decimal& start, bool keep_trades)
      : h_(h),
        inputs_(inputs),
        rule_(rule),
        keep_trades_(keep_trades),
        held_(h.market.columns()),
        units_(static_cast<std::size_t>(h.market.columns())),
        approx_(static_cast<std::size_t>(h.market.columns())),
        touched_(static_cast<std::size_t>(h.market.columns())),
        cash_(start) {
    rules::AccountState acct;
    acct.id = 1;
    acct.name = "simulated pool";
    portfolio_.accounts.push_back(std::move(acct));
  }

  void split(int c, const Decimal& ratio) {
    if (!held_.has(c)) return;
    set(c, unit(c) * ratio);
  }
  // Owed from the ex-date, cash on the pay date.
  void distribute(int c, const market::Distribution& d, std::size_t) {
    if (!held_.has(c)) return;
    const Decimal amount = in_pool(unit(c) * d.per_share, c, d.ex_date);
    distributions_ += amount;
    owed_.push_back(Owed{d.pay_date, amount});
    owed_total_ += amount.to_double();
  }
  // A corporate action at the start of its day, as the ledger applies it to
  // one account (ledger/actions.h): cash to the cent, and with a price for
  // them, the fractions of the units handed out paid in cash.
  void act(const CorporateAction& a, std::size_t) {
    const int c = h_.market.column(a.security_id);
    if (!held_.has(c)) return;
    const UnitEffect e = unit_effect(a);
    const Decimal held = unit(c);
    auto whole = [&](Decimal units) {
      if (!a.in_lieu) return units;
      const Decimal fraction = fraction_of(units);
      cash_ += in_pool(action_cash(fraction, *a.in_lieu), c, a.date);
      return units - fraction;
    };
    if (!e.target_units.is_zero()) {
      const int t = target_column(h_.market, a);
      set(t, unit(t) + whole(held * e.target_units));
      if (unit(t).is_positive()) held_.add(t);
    }
    if (!e.cash.is_zero()) cash_ += in_pool(action_cash(held, e.cash), c, a.date);
    if (e.keeps.is_zero()) {
      set(c, Decimal());
      held_.remove(c);
    } else if (e.keeps != Decimal(1)) {
      set(c, whole(held * e.keeps));
      if (!unit(c).is_positive()) held_.remove(c);
    }
  }
  void pay(Date day) {
    std::erase_if(owed_, [&](const Owed& o) {
      if (o.pay > day) return false;
      cash_ += o.amount;
      owed_total_ -= o.amount.to_double();
      return true;
    });
    if (owed_.empty()) owed_total_ = 0;  // no drift from the subtractions
  }
  // Cash and holdings, without the distributions owed.
  double invested(std::size_t row) const {
    double v = cash_.to_double();
    for (const int c : held_.columns)
      v += approx_[static_cast<std::size_t>(c)] * h_.market.value(row, c) * h_.fx(row, c);
    return v;
  }
  double value(std::size_t row) const { return invested(row) + owed_total_; }
  Decimal value_decimal(std::size_t row) const { return decimal_of(value(row)); }
  Decimal cash() const { return cash_; }
  int names() const { return static_cast<int>(held_.columns.size()); }
  Decimal distributions() const { return distributions_; }
  std::set<std::int64_t> held() const { return held_.ids(h_.market); }

  // `held`: held() as it stands.
  void rebalance(const Selection& sel, std::size_t row, Date day,
                 const std::set<std::int64_t>& held, RebalanceDay& rd) {
    rd.value_before = decimal_of(invested(row));
    const rules::Portfolio& p = portfolio();
    // A held security always has a close on or before any later day: it was
    // bought at one. The simulated pool has no ledger trades.
    std::vector<std::string> quote_notes;  // stale closes: traded at as they are
    inputs_.requote(h_.market, day, sel.targets, held, {}, quote_notes, quotes_);
    const auto plan =
        rules::orders_only(p, sel.targets, quotes_, rule_.trading, day, rules::Explain::none);
    // The orders applied as rules::apply() applies them, on the pool's own
    // units: what is held afterwards, in the order of the columns (marked
    // here, read in order below: no sort).
    for (const int c : held_.columns) touched_[static_cast<std::size_t>(c)] = 1;
    for (const auto& o : plan.orders) {
      rd.traded += o.value;
      rd.fees += o.fee;
      const int c = h_.market.column(o.security_id);
      touched_[static_cast<std::size_t>(c)] = 1;
      if (o.side == rules::Side::buy) {
        set(c, unit(c) + o.quantity);
        cash_ -= o.value + o.fee;
      } else {
        if (o.quantity > unit(c))
          throw std::logic_error(fmt::format("backtest: selling {} of security {}, holding {}",
                                             o.quantity.str(), o.security_id, unit(c).str()));
        set(c, unit(c) - o.quantity);
        cash_ += o.value - o.fee;
      }
      if (keep_trades_)
        rd.trades.push_back(Trade{o.security_id, o.side, o.quantity, o.price, o.fee});
    }
    held_.clear();
    for (std::size_t i = 0; i < touched_.size(); ++i) {
      if (!touched_[i]) continue;
      touched_[i] = 0;
      const int c = static_cast<int>(i);
      if (unit(c).is_positive()) held_.add(c);
    }
  }

 private:
  // The pool as one account for the rule's orders: its cash and units now.
  // The account is kept from one rebalance to the next, so that a name held
  // in both keeps its place in the holdings (no allocation).
  const rules::Portfolio& portfolio() {
    rules::AccountState& acct = portfolio_.accounts.front();
    acct.cash = cash_;
    std::erase_if(acct.holdings,
                  [&](const auto& kv) { return !held_.has(h_.market.column(kv.first)); });
    for (const int c : held_.columns) acct.holdings[h_.market.security_id(c)].quantity = unit(c);
    return portfolio_;
  }
  // Cash of column c's security in the pool's currency, at `day`'s rate,
  // rounded once to its minor units (market::View::convert).
  Decimal in_pool(const Decimal& amount, int c, Date day) const {
    if (!h_.foreign(c)) return amount;
    return h_.market.convert(amount, h_.security(h_.market.security_id(c)).currency, *h_.currency,
                             day);
  }
  const Decimal& unit(int c) const { return units_[static_cast<std::size_t>(c)]; }
  void set(int c, const Decimal& q) {
    units_[static_cast<std::size_t>(c)] = q;
    approx_[static_cast<std::size_t>(c)] = q.to_double();
  }
  const History& h_;
  const rules::Inputs& inputs_;
  const rules::Rule& rule_;
  bool keep_trades_;
  Held held_;
  std::vector<Decimal> units_;  // per column, exact
  std::vector<double> approx_;  // the same in doubles, for the daily value
  std::vector<char> touched_;   // per column: held or traded in the rebalance (then cleared)
  Decimal cash_;
  std::vector<Owed> owed_;
  double owed_total_ = 0;
  Decimal distributions_;
  rules::Portfolio portfolio_;  // see portfolio()
  rules::Quotes quotes_;        // kept from one rebalance to the next (Inputs::requote)
};

template <typename Pool>
StrategyRun simulate(const History& h, const rules::Rule& rule, const Request& req,
                     const std::vector<Date>& rebalance, std::string label, bool report_progress,
                     std::vector<std::string>& notes, Pool& pool, const rules::Inputs& inputs) {
  StrategyRun run;
  run.label = std::move(label);
  const Date opening = req.from.plus_days(-1);
  run.curve.push_back(CurvePoint{opening, req.start_value, req.start_value, 0});
  run.curve.reserve(h.market.trading_days().size() + 1);
  auto next_rebalance = rebalance.begin();
  double turnover_sum = 0;
  double names_sum = 0;
  run.names_min = std::numeric_limits<int>::max();
  const auto& m = h.market;
  const auto& days = m.trading_days();
  const auto& splits = m.split_events();
  const auto& distributions = m.distribution_events();
  const auto& actions = m.action_events();
  std::size_t next_split = 0, next_distribution = 0, next_action = 0;
  while (next_split < splits.size() && splits[next_split].date <= opening) ++next_split;
  while (next_action < actions.size() && actions[next_action].date <= opening) ++next_action;
  while (next_distribution < distributions.size() &&
         distributions[next_distribution].ex_date <= opening)
    ++next_distribution;
  const auto first = std::lower_bound(days.begin(), days.end(), req.from);
  for (auto it = first; it != days.end() && *it <= req.to; ++it) {
    const Date day = *it;
    const std::size_t row = m.row(day);
    for (; next_split < splits.size() && splits[next_split].date <= day; ++next_split)
      pool.split(m.column(splits[next_split].security_id), splits[next_split].ratio);
    for (; next_action < actions.size() && actions[next_action].date <= day; ++next_action)
      pool.act(actions[next_action], row);
    for (; next_distribution < distributions.size() &&
           distributions[next_distribution].ex_date <= day;
         ++next_distribution) {
      const auto& d = distributions[next_distribution];
      pool.distribute(m.column(d.security_id), d, row);
    }
    pool.pay(day);
    if (next_rebalance != rebalance.end() && *next_rebalance == day) {
      RebalanceDay rd;
      rd.day = day;
      const std::set<std::int64_t> held = pool.held();
      const Selection sel = select(h, inputs, rule, day, held);
      rd.passed = sel.passed;
      rd.selected = sel.selected;
      rd.no_selection = sel.none;
      if (sel.none)
        notes.push_back(fmt::format("{} ({}): nothing selected, the pool holds cash: {}", day.str(),
                                    run.label, *sel.none));
      if constexpr (std::is_same_v<Pool, OrderPool>)
        pool.rebalance(sel, row, day, held, rd);
      else
        pool.rebalance(sel, row, rd);
      rd.names_after = pool.names();
      run.fees += rd.fees;
      if (rd.value_before.is_positive())
        turnover_sum += (rd.traded.to_double() / 2) / rd.value_before.to_double();
      names_sum += rd.names_after;
      run.names_min = std::min(run.names_min, rd.names_after);
      run.names_max = std::max(run.names_max, rd.names_after);
      run.rebalances.push_back(std::move(rd));
      ++next_rebalance;
      if (report_progress && req.progress)
        req.progress(run.rebalances.size(), rebalance.size(), day);
    }
    run.curve.push_back(CurvePoint{day, pool.value_decimal(row), pool.cash(), pool.names()});
  }
  run.distributions = pool.distributions();
  if (run.rebalances.empty()) run.names_min = 0;
  run.names_mean = run.rebalances.empty() ? 0 : names_sum / run.rebalances.size();
  const double years = (req.to - req.from + 1) / 365.25;
  run.turnover_per_year = turnover_sum / years;
  return run;
}

StrategyRun simulate(const History& h, const rules::Rule& rule, const Request& req,
                     const std::vector<Date>& rebalance, std::string label, bool report_progress,
                     std::vector<std::string>& notes) {
  rules::Inputs inputs(rule, h.market, h.currency, h.convert);
  std::unique_ptr<rules::TrackRecord> track;
  if (rule.track_record) {
    track = std::make_unique<rules::TrackRecord>(rule, inputs, h.market);
    inputs.use(track.get());
  }
  if (!req.frictionless) {
    OrderPool pool(h, inputs, rule, req.start_value, req.keep_trades);
    return simulate(h, rule, req, rebalance, std::move(label), report_progress, notes, pool,
                    inputs);
  }
  if (req.exact_frictionless) {
    FrictionlessPool<Exact> pool(h, req.start_value, req.keep_trades);
    return simulate(h, rule, req, rebalance, std::move(label), report_progress, notes, pool,
                    inputs);
  }
  FrictionlessPool<Binary> pool(h, req.start_value, req.keep_trades);
  return simulate(h, rule, req, rebalance, std::move(label), report_progress, notes, pool, inputs);
}

perf::PerfInput perf_input(const StrategyRun& run, const Request& req,
                           const std::optional<std::vector<perf::LevelPoint>>& bench) {
  perf::PerfInput in;
  in.from = req.from;
  in.to = req.to;
  for (const auto& c : run.curve) in.series.push_back(perf::DayPoint{c.day, c.value, {}, {}});
  in.benchmark = bench;
  return in;
}

// Windows of n consecutive complete months from the start of any month,
// compounding perf::measure's monthly returns of the rule and of the other series.
RollingRow rolling(const std::vector<std::optional<double>>& rule_months,
                   const std::vector<std::optional<double>>& other, int n, std::string against) {
  const auto s =
      perf::compare_returns(perf::window_returns(rule_months, n), perf::window_returns(other, n));
  RollingRow row;
  row.against = std::move(against);
  row.months = n;
  row.windows = s.periods;
  row.beat = s.ahead;
  row.median_excess = s.median;
  row.worst_excess = s.worst;
  row.best_excess = s.best;
  return row;
}

}  // namespace

std::vector<std::optional<double>> monthly_returns(const StrategyRun& run) {
  std::vector<std::optional<double>> out;
  for (const auto& m : run.perf.months)
    out.push_back(m.complete ? std::optional<double>(m.twr) : std::nullopt);
  return out;
}

std::vector<std::optional<double>> benchmark_monthly_returns(const StrategyRun& run) {
  std::vector<std::optional<double>> out;
  for (const auto& m : run.perf.months) out.push_back(m.complete ? m.benchmark : std::nullopt);
  return out;
}

DownMarkets down_markets(const std::vector<std::pair<std::string, const StrategyRun*>>& runs,
                         const std::vector<std::optional<Decimal>>& benchmark_curve,
                         const std::string& benchmark, int window_months) {
  constexpr std::size_t kFalls = 3;
  DownMarkets out;
  out.benchmark = benchmark;
  out.window_months = window_months;
  if (runs.empty()) return out;
  const auto& days = runs.front().second->curve;
  std::vector<perf::IndexPoint> index;
  for (std::size_t i = 0; i < benchmark_curve.size() && i < days.size(); ++i)
    if (benchmark_curve[i])
      index.push_back(perf::IndexPoint{days[i].day, benchmark_curve[i]->to_double()});
  out.falls = perf::drawdown_episodes(index, kFalls);
  const auto bench_months = benchmark_monthly_returns(*runs.front().second);
  const auto bench_windows = perf::window_returns(bench_months, window_months);
  for (const auto& entry : runs) {
    const StrategyRun* run = entry.second;  // named: a lambda below captures it
    RunInMarkets r;
    r.label = entry.first;
    const auto months = monthly_returns(*run);
    r.months = perf::split_by_state(months, bench_months);
    r.windows = perf::split_by_state(perf::window_returns(months, window_months), bench_windows);
    r.capture = perf::capture(months, bench_months);
    auto value_on = [&](Date day) {
      const auto it = std::lower_bound(run->curve.begin(), run->curve.end(), day,
                                       [](const CurvePoint& c, Date d) { return c.day < d; });
      return it->value.to_double();  // the falls' days are days of the curve
    };
    for (const auto& f : out.falls) {
      const double start = value_on(f.peak);
      r.in_falls.push_back(start > 0 ? std::optional<double>(value_on(f.trough) / start - 1)
                                     : std::nullopt);
    }
    out.runs.push_back(std::move(r));
  }
  return out;
}

std::vector<std::string> backtest_cautions() {
  return {
      "Back-tests flatter: the rule was chosen by someone who already knew this past, and small "
      "changes to it that happened to fit the past look better than they will do.",
      "Costs, taxes, spreads and fills in life differ from the simulation's fee model and "
      "closing prices; taxes are not modelled at all (ask your tax authority or a licensed "
      "professional).",
      "Past results do not predict future ones. This is the output of your own rule on your own "
      "data, not investment advice.",
  };
}

rules::Rule baseline_rule(const rules::Rule& rule) {
  rules::Rule b = rule;
  b.name = rule.name + " (baseline: every eligible name, equal weight)";
  b.selection.by = rules::SelectBy::top_pct;
  b.selection.top_pct = Decimal(100);
  b.selection.exit_z.reset();
  b.track_record.reset();
  b.weights.scheme = rules::Scheme::equal;
  b.weights.max_weight = Decimal(1);
  return b;
}

namespace {

void check_request(const Request& req) {
  if (req.from > req.to)
    throw InputError(fmt::format("--from: {} is after --to {}", req.from.str(), req.to.str()));
  if (!req.start_value.is_positive())
    throw InputError(fmt::format("--start-value: {} is not above zero", req.start_value.str()));
  if (req.rolling_months < 1 || req.rolling_months > 600)
    throw InputError(
        fmt::format("--rolling: {} is not a number of months from 1 to 600", req.rolling_months));
}

}  // namespace

Result run(store::Database& db, const rules::Rule& rule, const Request& request) {
  check_request(request);
  std::vector<std::string> extra;
  if (request.benchmark) extra.push_back(*request.benchmark);
  const History h =
      load_history(db, rule, request.from.plus_days(-1), request.to, extra, rules::Convert::yes);
  return run(h, rule, request);
}

Result run(const History& h, const rules::Rule& rule, const Request& req) {
  check_request(req);
  const auto& days = h.market.trading_days();
  const auto first = std::lower_bound(days.begin(), days.end(), req.from);
  if (first == days.end() || *first > req.to)
    throw InputError(fmt::format("--from/--to: the ledger holds no close from {} to {}",
                                 req.from.str(), req.to.str()));

  Result res;
  res.rule_name = rule.name;
  res.from = req.from;
  res.to = req.to;
  res.start_value = req.start_value;
  res.frictionless = req.frictionless;
  res.rebalance_days =
      rebalance_days(days, h.market.next_trading_day(), req.from, req.to, rule.rebalance_months);
  if (res.rebalance_days.empty())
    throw InputError(fmt::format(
        "--from/--to: no month's last trading day falls between {} and {}; the rule never "
        "rebalances",
        req.from.str(), req.to.str()));

  std::optional<std::vector<perf::LevelPoint>> bench;
  std::optional<std::string> bench_note;
  if (req.benchmark) {
    std::optional<std::int64_t> id;
    if (const Security* s = h.market.security(*req.benchmark)) id = s->id;
    if (!id)
      throw InputError(
          fmt::format("--benchmark: no security '{}' in the ledger", printable(*req.benchmark)));
    const Date opening = req.from.plus_days(-1);
    if (!h.close(*id, opening))
      throw InputError(fmt::format("--benchmark: '{}' has no close on or before {}",
                                   printable(*req.benchmark), opening.str()));
    const std::string& own = h.security(*id).currency;
    const bool converted = h.currency && !own.empty() && own != *h.currency;
    const auto open_level = h.value_close(*id, opening);
    if (!open_level)
      throw InputError(fmt::format("--benchmark: no exchange rate for {}/{} on or before {}", own,
                                   *h.currency, opening.str()));
    bench.emplace();
    bench->push_back(perf::LevelPoint{opening, *open_level});
    for (auto it = first; it != days.end() && *it <= req.to; ++it)
      if (auto p = h.value_close(*id, *it)) bench->push_back(perf::LevelPoint{*it, *p});
    res.benchmark = *req.benchmark;
    if (converted)
      bench_note = fmt::format(
          "benchmark {} is priced in {}: its closes are converted into {} at each day's rate, "
          "unhedged",
          printable(*req.benchmark), own, *h.currency);
  }

  for (int c = 0; c < h.market.columns(); ++c) {
    const std::int64_t id = h.market.security_id(c);
    res.symbols.emplace(id, h.security(id).symbol);
  }
  res.notes = h.notes;
  if (bench_note) res.notes.push_back(*bench_note);
  res.rule = simulate(h, rule, req, res.rebalance_days, "rule", true, res.notes);
  res.rule.perf = perf::measure(perf_input(res.rule, req, bench));
  if (req.baseline) {
    res.baseline =
        simulate(h, baseline_rule(rule), req, res.rebalance_days, "baseline", false, res.notes);
    res.baseline.perf = perf::measure(perf_input(res.baseline, req, bench));
  }

  const auto months = monthly_returns(res.rule);
  if (bench) {
    const std::int64_t id = h.market.security(*req.benchmark)->id;
    for (const auto& c : res.rule.curve) res.benchmark_curve.push_back(h.value_close(id, c.day));
    res.rolling.push_back(rolling(months, benchmark_monthly_returns(res.rule), req.rolling_months,
                                  "benchmark " + *req.benchmark));
  }
  if (req.baseline) {
    res.rolling.push_back(
        rolling(months, monthly_returns(res.baseline), req.rolling_months, "baseline"));
    if (bench)
      res.down_markets = down_markets({{"rule", &res.rule}, {"baseline", &res.baseline}},
                                      res.benchmark_curve, *req.benchmark, req.rolling_months);
  }
  res.cautions = backtest_cautions();
  return res;
}

}  // namespace keel::backtest
