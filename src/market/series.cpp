#include "market/series.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <limits>
#include <set>
#include <stdexcept>

#include "market/close_pack.h"
#include "store/action_store.h"
#include "store/fx_store.h"
#include "store/ledger_store.h"
#include "store/market_rows.h"

namespace keel::market {
namespace {

constexpr double kNone = std::numeric_limits<double>::quiet_NaN();
// Stored integers below 2^50 come back exactly from value x 10^scale
// (the double product errs by far less than a half).
constexpr double kExactLimit = 1125899906842624.0;  // 2^50
constexpr const double* kPow10 = Series::kScales;
static_assert(kPackMaxScale + 1 == std::size(Series::kScales));
static_assert(kExactLimit == static_cast<double>(kPackMantissaLimit));

// The ISO text of every day of the span, to find a row's day by comparing
// text instead of parsing it: rows of a security come by date, so the next
// one is a few days after the last (else Date::parse decides).
class SpanDays {
 public:
  SpanDays(Date from, std::size_t n) : from_(from), text_(n) {
    for (std::size_t r = 0; r < n; ++r) {
      const std::string t = from.plus_days(static_cast<int>(r)).str();
      std::copy_n(t.data(), 10, text_[r].data());
    }
  }
  // The row of `day`, which must be on or after row `hint` (rows come by
  // date; std::logic_error otherwise); size() for a day after the span.
  std::size_t row(std::string_view day, std::size_t hint) const {
    if (day.size() == 10)
      for (std::size_t r = hint; r < text_.size() && r < hint + 8; ++r)
        if (std::memcmp(day.data(), text_[r].data(), 10) == 0) return r;
    const int at = Date::parse(day) - from_;
    if (at < static_cast<int>(hint))
      throw std::logic_error("market::Series: rows out of date order");
    return std::min(static_cast<std::size_t>(at), text_.size());
  }
  std::size_t size() const { return text_.size(); }

 private:
  Date from_;
  std::vector<std::array<char, 10>> text_;
};

// Reads the closes of one security into `column` (one value per row of the
// span, forward-filled) and says how its doubles map back to decimals: from
// the price rows, or from the security's close pack (market/close_pack.h).
struct ColumnReader {
  store::MarketRows& rows;
  const SpanDays& days;
  std::string before_text, from_text;
  Date from;

  struct Result {
    std::optional<Date> seed_day;
    int scale = 0;
    bool fits = true;  // every close fits the scale rule
  };

  // Fills in the values taken, in date order; both sources end here.
  struct Fill {
    Result out;
    double max_value = 0;
    double last = kNone;
    void plain(std::int64_t m, int scale) {
      out.scale = std::max(out.scale, scale);
      // Both operands exact: the quotient is the double nearest the decimal.
      last = static_cast<double>(m) / kPow10[scale];
      max_value = std::max(max_value, last);
    }
    void text(std::string_view t) {
      std::int64_t m = 0;
      int scale = 0;
      if (plain_close(t, m, scale)) return plain(m, scale);
      out.fits = false;
      last = Decimal::parse(t).to_double();
      max_value = std::max(max_value, last);
    }
    Result done() {
      if (max_value * kPow10[out.scale] >= kExactLimit) out.fits = false;
      return out;
    }
  };

  template <typename Fresh>
  Result read(std::int64_t id, double* column, std::size_t n_rows, Fresh&& fresh) {
    Fill f;
    auto& seed = rows.closes_until(id, before_text);
    if (seed.next()) {
      f.out.seed_day = Date::parse(seed.text(0));
      f.text(seed.text(1));
      seed.reset();
    }
    std::size_t r = 0;
    auto row = [&](const store::MarketRows::Row& x) {
      const std::size_t at = days.row(x[0], r);
      if (at >= n_rows) return false;  // past the span: the rest are later still
      for (; r < at; ++r) column[r] = f.last;
      f.text(x[1]);
      column[r] = f.last;
      fresh(r);
      ++r;
      return true;
    };
    rows.scan_closes(id, from_text, row);
    for (; r < n_rows; ++r) column[r] = f.last;
    return f.done();
  }

  // The same from every close of the security, ascending by day.
  template <typename Fresh>
  Result read(const std::vector<PackedClose>& closes, double* column, std::size_t n_rows,
              Fresh&& fresh) {
    Fill f;
    const auto first = std::lower_bound(closes.begin(), closes.end(), from,
                                        [](const PackedClose& c, Date d) { return c.day < d; });
    if (first != closes.begin()) {
      const PackedClose& seed = *std::prev(first);
      f.out.seed_day = seed.day;
      f.plain(seed.mantissa, seed.scale);
    }
    std::size_t r = 0;
    for (auto it = first; it != closes.end(); ++it) {
      const auto at = static_cast<std::size_t>(it->day - from);
      if (at >= n_rows) break;
      for (; r < at; ++r) column[r] = f.last;
      f.plain(it->mantissa, it->scale);
      column[r] = f.last;
      fresh(r);
      ++r;
    }
    for (; r < n_rows; ++r) column[r] = f.last;
    return f.done();
  }
};

// The closes of a security dated on or after `from` (every one for ""),
// appended from its rows, for a pack; false when one is outside what a pack
// keeps.
bool read_closes(store::MarketRows& rows, std::int64_t id, std::string_view from,
                 std::vector<PackedClose>& out) {
  bool packable = true;
  auto take = [&](const store::MarketRows::Row& x) {
    PackedClose c;
    if (!plain_close(x[1], c.mantissa, c.scale)) {
      packable = false;
      return false;
    }
    c.day = Date::parse(x[0]);
    out.push_back(c);
    return true;
  };
  rows.scan_closes(id, from, take);
  return packable;
}

}  // namespace

Series Series::load(store::Database& db, const Request& req) {
  if (req.from > req.to)
    throw std::invalid_argument(
        fmt::format("Series::load: {} is after {}", req.from.str(), req.to.str()));
  Series s;
  s.from_ = req.from;
  s.to_ = req.to;
  s.rows_ = static_cast<std::size_t>(req.to - req.from) + 1;
  s.securities_ = store::list_securities(db);
  s.metric_names_ = store::metric_names(db);

  std::set<std::int64_t> known;
  for (const auto& sec : s.securities_) known.insert(sec.id);
  if (req.securities) {
    for (const std::int64_t id : *req.securities)
      if (!known.count(id))
        throw std::invalid_argument(fmt::format("Series::load: no security {}", id));
    s.ids_.assign(req.securities->begin(), req.securities->end());
    std::sort(s.ids_.begin(), s.ids_.end());
    s.ids_.erase(std::unique(s.ids_.begin(), s.ids_.end()), s.ids_.end());
  } else {
    s.ids_.assign(known.begin(), known.end());
  }
  const std::size_t n_cols = s.ids_.size();
  for (std::size_t c = 0; c < n_cols; ++c) s.column_of_.emplace(s.ids_[c], static_cast<int>(c));

  const std::size_t n_rows = s.rows_;
  s.cells_.assign(n_rows * n_cols, kNone);
  s.fresh_.assign((n_rows * n_cols + 63) / 64, 0);
  s.seed_day_.resize(n_cols);
  s.exact_.resize(n_cols);
  std::vector<char> any_close(n_rows, 0);

  store::MarketRows rows(db);
  const SpanDays span(req.from, n_rows);
  const std::string to_text = req.to.str();
  ColumnReader reader{rows, span, req.from.plus_days(-1).str(), req.from.str(), req.from};
  // A security's closes come from its pack when the ledger keeps one; else
  // from its rows, and then, where the ledger can be written, they are read
  // whole and packed for the next load (kept at the end, see below).
  const bool keep = store::can_keep_close_packs(db);
  const std::int64_t version = keep ? store::change_count(db) : 0;
  std::vector<store::KeptPack> packs;
  std::vector<PackedClose> closes;
  auto kept = [&](std::int64_t id, std::string packed) {
    packs.push_back(store::KeptPack{id, closes.empty() ? std::string() : closes.back().day.str(),
                                    std::move(packed)});
  };
  // The whole closes of a security, from its pack and the closes after the
  // pack's last day (its tail), or (where packs can be kept) from its rows;
  // nullptr when they are to be read from the rows by span.
  auto whole = [&](std::int64_t id) -> const std::vector<PackedClose>* {
    if (const auto pack = rows.close_pack(id)) {
      if (pack->packed == kUnpackable) return nullptr;
      const std::string last(pack->last_day);
      if (unpack_closes(pack->packed, closes) &&
          (closes.empty() ? last.empty() : closes.back().day.str() == last)) {
        const std::size_t packed = closes.size();
        if (read_closes(rows, id, last.empty() ? "" : Date::parse(last).plus_days(1).str(),
                        closes)) {
          if (keep && closes.size() - packed >= kPackTailLimit) kept(id, pack_closes(closes));
          return &closes;
        }
      }
    }
    if (!keep) return nullptr;
    closes.clear();
    if (!read_closes(rows, id, "", closes)) {
      // Any change of its closes drops it: its last day is the last there is.
      packs.push_back(store::KeptPack{id, std::string(kUnpackableLastDay), kUnpackable});
      return nullptr;
    }
    // A security without closes costs one empty range read: no pack.
    if (!closes.empty()) kept(id, pack_closes(closes));
    return &closes;
  };
  // The first close after the span, from a security's whole closes.
  std::vector<char> next_known(n_cols, 0);
  auto note_next = [&](const std::vector<PackedClose>& all) {
    const auto it = std::upper_bound(all.begin(), all.end(), req.to,
                                     [](Date d, const PackedClose& c) { return d < c.day; });
    if (it != all.end() && (!s.next_trading_day_ || it->day < *s.next_trading_day_))
      s.next_trading_day_ = it->day;
  };
  auto read_column = [&](std::size_t c, double* column, auto& fresh) {
    const auto* all = whole(s.ids_[c]);
    if (!all) return reader.read(s.ids_[c], column, n_rows, fresh);
    note_next(*all);
    next_known[c] = 1;
    return reader.read(*all, column, n_rows, fresh);
  };
  // A block of columns is read column by column, then written into the
  // row-major grid row by row: both sides stay sequential in memory.
  constexpr std::size_t kBlock = 64;
  // As wide as the widest block: fewer columns than kBlock need no more room.
  std::vector<double> block(std::min(kBlock, n_cols) * n_rows);
  for (std::size_t c0 = 0; c0 < n_cols; c0 += kBlock) {
    const std::size_t width = std::min(kBlock, n_cols - c0);
    for (std::size_t k = 0; k < width; ++k) {
      const std::size_t c = c0 + k;
      auto fresh = [&](std::size_t r) {
        const std::size_t bit = c * n_rows + r;
        s.fresh_[bit / 64] |= std::uint64_t{1} << (bit % 64);
        any_close[r] = 1;
      };
      const auto got = read_column(c, &block[k * n_rows], fresh);
      s.seed_day_[c] = got.seed_day;
      Exact& ex = s.exact_[c];
      ex.scale = got.scale;
      if (!got.fits) {
        // Closes too long for the scale rule are kept as decimals (rare).
        ex.listed = true;
        if (got.seed_day) {
          auto& seed = rows.closes_until(s.ids_[c], reader.before_text);
          if (seed.next()) ex.seed = Decimal::parse(seed.text(1));
          seed.reset();
        }
        std::size_t r = 0;
        auto keep = [&](const store::MarketRows::Row& x) {
          r = span.row(x[0], r);
          if (r >= n_rows) return false;
          ex.list.emplace_back(static_cast<std::uint32_t>(r), Decimal::parse(x[1]));
          return true;
        };
        rows.scan_closes(s.ids_[c], reader.from_text, keep);
      }
    }
    for (std::size_t r = 0; r < n_rows; ++r) {
      double* out = &s.cells_[r * n_cols + c0];
      for (std::size_t k = 0; k < width; ++k) out[k] = block[k * n_rows + r];
    }
  }

  // The trading calendar: days with a close of any security of the ledger.
  for (const auto& sec : s.securities_) {
    const int c = s.column(sec.id);
    if (c >= 0 && next_known[static_cast<std::size_t>(c)]) continue;
    if (c < 0) {
      if (const auto* all = whole(sec.id)) {
        const auto first = std::lower_bound(all->begin(), all->end(), req.from,
                                            [](const PackedClose& x, Date d) { return x.day < d; });
        for (auto it = first; it != all->end() && it->day <= req.to; ++it)
          any_close[static_cast<std::size_t>(it->day - req.from)] = 1;
        note_next(*all);
        continue;
      }
      std::size_t r = 0;
      auto day = [&](const store::MarketRows::Row& x) {
        r = span.row(x[0], r);
        if (r >= n_rows) return false;
        any_close[r] = 1;
        return true;
      };
      rows.scan_close_days(sec.id, reader.from_text, day);
    }
    auto& next = rows.first_close_after(sec.id, to_text);
    if (next.next()) {
      const Date d = Date::parse(next.text(0));
      if (!s.next_trading_day_ || d < *s.next_trading_day_) s.next_trading_day_ = d;
      next.reset();
    }
  }
  store::keep_close_packs(db, packs, version);
  packs = {};
  for (std::size_t r = 0; r < n_rows; ++r)
    if (any_close[r]) s.trading_days_.push_back(req.from.plus_days(static_cast<int>(r)));

  for (const auto& metric : req.metrics) {
    if (std::find(s.metrics_.begin(), s.metrics_.end(), metric) != s.metrics_.end()) continue;
    s.metrics_.push_back(metric);
    // Each security's rows in key order, then all of them by known_on: a
    // stable counting sort on the day, which keeps (security, period) order
    // within a day.
    std::vector<FigureRow> rows_read;
    for (std::size_t c = 0; c < n_cols; ++c) {
      auto take = [&](const store::MarketRows::Row& x) {
        if (x[1] > std::string_view(to_text)) return true;  // unknown within the span
        rows_read.push_back(FigureRow{static_cast<int>(c), Date::parse(x[0]), Date::parse(x[1]),
                                      Decimal::parse(x[2])});
        return true;
      };
      rows.scan_figures(s.ids_[c], metric, take);
    }
    auto& list = s.figure_rows_.emplace_back();
    if (!rows_read.empty()) {
      auto [lo, hi] = std::minmax_element(
          rows_read.begin(), rows_read.end(),
          [](const FigureRow& a, const FigureRow& b) { return a.known_on < b.known_on; });
      const Date first = lo->known_on;
      std::vector<std::size_t> start(static_cast<std::size_t>(hi->known_on - first) + 2, 0);
      for (const auto& f : rows_read) ++start[static_cast<std::size_t>(f.known_on - first) + 1];
      for (std::size_t i = 1; i < start.size(); ++i) start[i] += start[i - 1];
      std::vector<std::size_t> order(rows_read.size());
      for (std::size_t i = 0; i < rows_read.size(); ++i)
        order[start[static_cast<std::size_t>(rows_read[i].known_on - first)]++] = i;
      list.reserve(rows_read.size());
      for (const std::size_t i : order) list.push_back(std::move(rows_read[i]));
    }
  }
  s.cursors_.resize(s.metrics_.size());
  for (std::size_t i = 0; i < s.metrics_.size(); ++i) s.cursors_[i] = s.figures(s.metrics_[i]);

  {
    auto& st = rows.distributions_between(std::nullopt, reader.from_text, to_text);
    while (st.next())
      if (s.column_of_.count(st.integer(0)))
        s.distributions_.push_back(Distribution{st.integer(0), Date::parse(st.text(1)),
                                                Date::parse(st.text(2)),
                                                Decimal::parse(st.text(3))});
  }
  {
    auto& st = rows.splits_between(std::nullopt, reader.from_text, to_text);
    while (st.next())
      if (s.column_of_.count(st.integer(0)))
        s.splits_.push_back(
            SplitEvent{st.integer(0), Date::parse(st.text(1)), Decimal::parse(st.text(2))});
  }
  {
    const auto all = store::list_actions(db);
    for (const auto* a : live_actions(all))
      if (a->date <= req.to && s.column_of_.count(a->security_id)) s.actions_.push_back(*a);
  }
  s.currencies_ = req.currencies;
  std::sort(s.currencies_.begin(), s.currencies_.end());
  s.currencies_.erase(std::unique(s.currencies_.begin(), s.currencies_.end()), s.currencies_.end());
  for (const auto& c : s.currencies_)
    for (const auto& r : store::list_fx_rates(db, c, req.to)) {
      s.rates_.add(r.base, r.quote, r.date, r.rate);
      if (r.date >= req.from) s.rate_days_.push_back(r.date);
    }
  std::sort(s.rate_days_.begin(), s.rate_days_.end());
  s.rate_days_.erase(std::unique(s.rate_days_.begin(), s.rate_days_.end()), s.rate_days_.end());
  return s;
}

const FxRates& Series::rates_for(const std::string& base, const std::string& quote,
                                 Date day) const {
  row(day);  // inside the span
  for (const auto* c : {&base, &quote})
    if (!std::binary_search(currencies_.begin(), currencies_.end(), *c))
      throw std::out_of_range(
          fmt::format("market::Series: exchange rates of {} are not loaded", *c));
  return rates_;
}

int Series::column(std::int64_t security_id) const {
  const auto it = column_of_.find(security_id);
  return it == column_of_.end() ? -1 : it->second;
}

std::size_t Series::row(Date day) const {
  if (day < from_ || day > to_)
    throw std::out_of_range(
        fmt::format("market::Series: {} is outside {}..{}", day.str(), from_.str(), to_.str()));
  return static_cast<std::size_t>(day - from_);
}

bool Series::fresh(std::size_t row, int column) const {
  const std::size_t bit = static_cast<std::size_t>(column) * rows_ + row;
  return (fresh_[bit / 64] >> (bit % 64)) & 1;
}

Date Series::close_day(std::size_t row, int column) const {
  for (std::size_t r = row + 1; r-- > 0;)
    if (fresh(r, column)) return from_.plus_days(static_cast<int>(r));
  const auto& seed = seed_day_[static_cast<std::size_t>(column)];
  if (!seed) throw std::logic_error("market::Series::close_day: no close on or before the day");
  return *seed;
}

int Series::price_places(int column) const {
  const Exact& ex = exact_[static_cast<std::size_t>(column)];
  return ex.listed ? -1 : ex.scale;
}

Decimal Series::exact(std::size_t row, int column) const {
  const Exact& ex = exact_[static_cast<std::size_t>(column)];
  if (!ex.listed) return Decimal::scaled(scaled_close(row, column), ex.scale);
  const auto it = std::upper_bound(ex.list.begin(), ex.list.end(), row,
                                   [](std::size_t r, const auto& e) { return r < e.first; });
  if (it != ex.list.begin()) return std::prev(it)->second;
  if (!ex.seed) throw std::logic_error("market::Series::exact: no close on or before the day");
  return *ex.seed;
}

std::vector<Close> Series::closes(std::int64_t security_id) const {
  const int c = loaded(security_id);
  std::vector<Close> out;
  for (std::size_t r = 0; r < rows_; ++r)
    if (has(r, c) && (r == 0 || fresh(r, c))) out.push_back(Close{close_day(r, c), exact(r, c)});
  return out;
}

int Series::loaded(std::int64_t security_id) const {
  const int c = column(security_id);
  if (c < 0)
    throw std::out_of_range(fmt::format("market::Series: security {} is not loaded", security_id));
  return c;
}

bool Series::has_close(std::int64_t security_id, Date day) const {
  return has(row(day), loaded(security_id));
}

std::optional<Close> Series::close(std::int64_t security_id, Date day) const {
  const int c = loaded(security_id);
  const std::size_t r = row(day);
  if (!has(r, c)) return std::nullopt;
  return Close{close_day(r, c), exact(r, c)};
}

Series::FigureCursor Series::figures(std::string_view metric) const {
  const auto it = std::find(metrics_.begin(), metrics_.end(), metric);
  if (it == metrics_.end())
    throw std::out_of_range(fmt::format("market::Series: metric '{}' is not loaded", metric));
  FigureCursor cursor;
  cursor.rows_ = &figure_rows_[static_cast<std::size_t>(it - metrics_.begin())];
  cursor.best_.assign(ids_.size(), -1);
  return cursor;
}

void Series::FigureCursor::advance_to(Date day) {
  if (day_ && day < *day_) {
    std::fill(best_.begin(), best_.end(), -1);
    next_ = 0;
  }
  day_ = day;
  const auto& rows = *rows_;
  // Rows come by known_on: each one known by now replaces the figure held
  // for its security when its period is at least as late.
  for (; next_ < rows.size() && rows[next_].known_on <= day; ++next_) {
    auto& best = best_[static_cast<std::size_t>(rows[next_].column)];
    if (best < 0 || rows[static_cast<std::size_t>(best)].period <= rows[next_].period)
      best = static_cast<std::int32_t>(next_);
  }
}

Series::FigureCursor& Series::cursor(std::string_view metric) const {
  const auto it = std::find(metrics_.begin(), metrics_.end(), metric);
  if (it == metrics_.end())
    throw std::out_of_range(fmt::format("market::Series: metric '{}' is not loaded", metric));
  return cursors_[static_cast<std::size_t>(it - metrics_.begin())];
}

std::optional<Figure> Series::figure(std::int64_t security_id, std::string_view metric,
                                     Date day) const {
  const int c = loaded(security_id);
  row(day);  // inside the span
  auto& cursor = this->cursor(metric);
  cursor.advance_to(day);
  const FigureRow* f = cursor.at(c);
  if (!f) return std::nullopt;
  return Figure{f->value, f->period, f->known_on};
}

namespace {

// The events of `all` dated in [from, to], of one security or of all.
template <typename Event, typename DateOf>
std::vector<Event> events_between(const std::vector<Event>& all, std::optional<std::int64_t> id,
                                  Date from, Date to, DateOf date_of) {
  std::vector<Event> out;
  for (const auto& e : all)
    if (date_of(e) >= from && date_of(e) <= to && (!id || e.security_id == *id)) out.push_back(e);
  return out;
}

}  // namespace

void Series::check_span(std::optional<std::int64_t> security_id, Date from, Date to) const {
  row(from);
  row(to);
  if (security_id) loaded(*security_id);
}

std::vector<Distribution> Series::distributions(std::optional<std::int64_t> security_id, Date from,
                                                Date to) const {
  check_span(security_id, from, to);
  return events_between(distributions_, security_id, from, to,
                        [](const Distribution& d) { return d.ex_date; });
}

std::vector<SplitEvent> Series::splits(std::optional<std::int64_t> security_id, Date from,
                                       Date to) const {
  check_span(security_id, from, to);
  return events_between(splits_, security_id, from, to, [](const SplitEvent& e) { return e.date; });
}

std::vector<CorporateAction> Series::actions(std::optional<std::int64_t> security_id, Date from,
                                             Date to) const {
  check_span(security_id, from, to);
  return actions_between(actions_, security_id, from, to);
}

std::optional<Date> Series::ended(std::int64_t security_id, Date day) const {
  row(day);
  loaded(security_id);
  return end_of(actions_, security_id, day);
}

}  // namespace keel::market
