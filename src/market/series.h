// Series: the market::View preloaded for a set of securities over a span of
// days, in columns, for readers of many days (back-test, signal check,
// returns, statement).
//
// Contract
//  - load() reads, for the securities asked for (every security of the
//    ledger when unset): their closes dated in [from, to] and the latest
//    close before `from`, with one ordered range read per security; the
//    figures of the metrics asked for that are known on or before `to`; the
//    distributions and splits dated in [from, to]; their live corporate
//    actions dated on or before `to`; the exchange rates dated on or before
//    `to` of every pair with a currency asked for on either side (enough for
//    direct, inverted and crossed rates between them). Of the other
//    securities it reads only which days have a close.
//  - As a View (market/view.h) it answers for the loaded securities and days
//    in [from, to]; anything else throws std::out_of_range. A metric not
//    loaded, or a rate of a currency not asked for, throws std::out_of_range
//    too.
//  - Closes sit in a day x security grid, one row per calendar day of the
//    span, forward-filled: "the close on or before a day" is one array read.
//    value() is the nearest double to the stored decimal (NaN when there is
//    no close on or before the day); exact() gives the stored decimal back
//    exactly.
//  - trading_days(): every day in [from, to] on which any security of the
//    ledger (loaded or not) has a close, ascending; next_trading_day(): the
//    first such day after `to`, if any. rate_days(): every day in [from, to]
//    with a loaded exchange rate, ascending.
//  - FigureCursor: the figures of one loaded metric as known on a day (the
//    rule of market/view.h), advanced by a pointer over the rows in known_on
//    order; a day earlier than the last one asked starts it over.
#pragma once

#include <cmath>
#include <cstdint>
#include <optional>
#include <string>
#include <unordered_map>
#include <utility>
#include <vector>

#include "market/view.h"
#include "store/database.h"

namespace keel::market {

class Series final : public View {
 public:
  struct Request {
    std::optional<std::vector<std::int64_t>> securities;  // unset: every security
    Date from, to;                                        // the days answered, from <= to
    std::vector<std::string> metrics;                     // figures to load
    std::vector<std::string> currencies;                  // exchange rates to load
  };
  // Throws std::invalid_argument for from > to or an id the ledger does not hold.
  static Series load(store::Database& db, const Request& request);
  Series(Series&&) = default;
  Series& operator=(Series&&) = default;
  Series(const Series&) = delete;
  Series& operator=(const Series&) = delete;

  std::optional<Close> close(std::int64_t security_id, Date day) const override;
  bool has_close(std::int64_t security_id, Date day) const override;
  std::optional<Figure> figure(std::int64_t security_id, std::string_view metric,
                               Date day) const override;
  std::vector<Distribution> distributions(std::optional<std::int64_t> security_id, Date from,
                                          Date to) const override;
  std::vector<SplitEvent> splits(std::optional<std::int64_t> security_id, Date from,
                                 Date to) const override;
  std::vector<CorporateAction> actions(std::optional<std::int64_t> security_id, Date from,
                                       Date to) const override;
  std::optional<Date> ended(std::int64_t security_id, Date day) const override;
  const std::vector<Security>& securities() const override { return securities_; }
  std::vector<std::string> metric_names() const override { return metric_names_; }

  Date from() const { return from_; }
  Date to() const { return to_; }
  const std::vector<Date>& trading_days() const { return trading_days_; }
  std::optional<Date> next_trading_day() const { return next_trading_day_; }
  const std::vector<Date>& rate_days() const { return rate_days_; }

  // 10^scale for the scales a column keeps (at most 15, see exact()).
  static constexpr double kScales[] = {1e0, 1e1, 1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                       1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};

  // Columns: one per loaded security, ascending by id.
  int columns() const { return static_cast<int>(ids_.size()); }
  int column(std::int64_t security_id) const;  // -1 when not loaded
  std::int64_t security_id(int column) const { return ids_.at(static_cast<std::size_t>(column)); }
  // Rows: one per calendar day of [from, to].
  std::size_t row(Date day) const;  // std::out_of_range outside the span
  double value(std::size_t row, int column) const {
    return cells_[row * ids_.size() + static_cast<std::size_t>(column)];
  }
  bool has(std::size_t row, int column) const { return !std::isnan(value(row, column)); }
  Decimal exact(std::size_t row, int column) const;  // requires has(row, column)
  // The closes that matter to the span: the close on or before its first day
  // (if any), then every close dated after that day, ascending.
  std::vector<Close> closes(std::int64_t security_id) const;
  Date close_day(std::size_t row, int column) const;  // requires has(row, column)
  // Digits after the point that turn a column's doubles back into its stored
  // decimals (exact() rounds value x 10^places); -1 for a column kept as a
  // list of decimals.
  int price_places(int column) const;
  // The close x 10^price_places(column), exactly: the stored decimal's
  // mantissa at that scale. Requires has(row, column) and places >= 0.
  long long scaled_close(std::size_t row, int column) const {
    return std::llround(value(row, column) *
                        kScales[exact_[static_cast<std::size_t>(column)].scale]);
  }

  struct FigureRow {
    int column = 0;
    Date period;
    Date known_on;
    Decimal value;
  };
  class FigureCursor {
   public:
    void advance_to(Date day);
    const FigureRow* at(int column) const {
      const auto i = best_[static_cast<std::size_t>(column)];
      return i < 0 ? nullptr : &(*rows_)[static_cast<std::size_t>(i)];
    }

   private:
    friend class Series;
    const std::vector<FigureRow>* rows_ = nullptr;
    std::vector<std::int32_t> best_;  // per column: index into rows_, or -1
    std::size_t next_ = 0;            // rows_ before it are applied
    std::optional<Date> day_;
  };
  FigureCursor figures(std::string_view metric) const;
  // The series' own cursor of a loaded metric, as figure() uses it.
  FigureCursor& cursor(std::string_view metric) const;

  // Every loaded event, by date and then security id.
  const std::vector<Distribution>& distribution_events() const { return distributions_; }
  const std::vector<SplitEvent>& split_events() const { return splits_; }
  // The live corporate actions of the loaded securities dated on or before
  // `to` (earlier ones too, for ended()), by date and then id.
  const std::vector<CorporateAction>& action_events() const { return actions_; }

 protected:
  const FxRates& rates_for(const std::string& base, const std::string& quote,
                           Date day) const override;

 private:
  Series() = default;
  // How a column's doubles give back the stored decimals: by scale (each
  // value x 10^scale is the stored integer, below 2^50), or, for closes too
  // long for that, from a list kept exactly.
  struct Exact {
    int scale = 0;
    bool listed = false;
    std::vector<std::pair<std::uint32_t, Decimal>> list;  // (row, close), by row
    std::optional<Decimal> seed;                          // the close before `from`
  };
  bool fresh(std::size_t row, int column) const;
  int loaded(std::int64_t security_id) const;  // the column; std::out_of_range when not loaded
  void check_span(std::optional<std::int64_t> security_id, Date from, Date to) const;

  Date from_, to_;
  std::size_t rows_ = 0;
  std::vector<Security> securities_;
  std::vector<std::string> metric_names_;
  std::vector<std::int64_t> ids_;
  std::unordered_map<std::int64_t, int> column_of_;
  std::vector<double> cells_;                  // rows_ x columns, row-major
  std::vector<std::uint64_t> fresh_;           // column-major bits: a close on exactly that day
  std::vector<std::optional<Date>> seed_day_;  // per column: the day of the close before `from`
  std::vector<Exact> exact_;
  std::vector<Date> trading_days_;
  std::optional<Date> next_trading_day_;
  std::vector<std::string> metrics_;
  std::vector<std::vector<FigureRow>> figure_rows_;  // per metric, in known_on order
  mutable std::vector<FigureCursor> cursors_;        // per metric, for figure()
  std::vector<Distribution> distributions_;
  std::vector<SplitEvent> splits_;
  std::vector<CorporateAction> actions_;
  std::vector<std::string> currencies_;  // sorted
  FxRates rates_;
  std::vector<Date> rate_days_;
};

}  // namespace keel::market
