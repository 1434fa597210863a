#include "market/day_view.h"

#include "store/action_store.h"
#include "store/fx_store.h"
#include "store/ledger_store.h"

namespace keel::market {
DayView::DayView(store::Database& db) : db_(db) {}

store::MarketRows& DayView::rows() const {
  if (!rows_) rows_ = std::make_unique<store::MarketRows>(db_);
  return *rows_;
}

const std::vector<Security>& DayView::securities() const {
  if (!securities_) securities_ = store::list_securities(db_);
  return *securities_;
}

const std::string& DayView::text(Date day) const {
  if (day_ != day) day_ = day, day_text_ = day.str();
  return day_text_;
}

std::optional<Close> DayView::close(std::int64_t security_id, Date day) const {
  if (latest_) {
    // On or after a security's latest close, that close is the answer; a
    // security without closes has none.
    const auto it = latest_->find(security_id);
    if (it == latest_->end()) return std::nullopt;
    if (it->second.day <= day) return it->second;
  }
  // Newest first: the first row is the close on or before the day.
  auto& rows = this->rows().closes_until(security_id, text(day));
  if (!rows.next()) return std::nullopt;
  Close c{Date::parse(rows.text(0)), Decimal::parse(rows.text(1))};
  rows.reset();
  return c;
}

std::optional<Figure> DayView::figure(std::int64_t security_id, std::string_view metric,
                                      Date day) const {
  // Rows known on the day, latest period first and within it the latest
  // known_on first: the first row is the figure known on the day.
  auto& rows = this->rows().figures_until(security_id, metric, text(day));
  if (!rows.next()) return std::nullopt;
  Figure f{Decimal::parse(rows.text(2)), Date::parse(rows.text(0)), Date::parse(rows.text(1))};
  rows.reset();
  return f;
}

std::vector<Distribution> DayView::distributions(std::optional<std::int64_t> security_id, Date from,
                                                 Date to) const {
  std::vector<Distribution> out;
  auto& rows = this->rows().distributions_between(security_id, from.str(), to.str());
  while (rows.next())
    out.push_back(Distribution{rows.integer(0), Date::parse(rows.text(1)),
                               Date::parse(rows.text(2)), Decimal::parse(rows.text(3))});
  return out;
}

std::vector<SplitEvent> DayView::splits(std::optional<std::int64_t> security_id, Date from,
                                        Date to) const {
  std::vector<SplitEvent> out;
  auto& rows = this->rows().splits_between(security_id, from.str(), to.str());
  while (rows.next())
    out.push_back(
        SplitEvent{rows.integer(0), Date::parse(rows.text(1)), Decimal::parse(rows.text(2))});
  return out;
}

const std::vector<CorporateAction>& DayView::live() const {
  if (!live_) {
    const auto all = store::list_actions(db_);
    live_.emplace();
    for (const auto* a : live_actions(all)) live_->push_back(*a);
  }
  return *live_;
}

std::vector<CorporateAction> DayView::actions(std::optional<std::int64_t> security_id, Date from,
                                              Date to) const {
  return actions_between(live(), security_id, from, to);
}

std::optional<Date> DayView::ended(std::int64_t security_id, Date day) const {
  return end_of(live(), security_id, day);
}

std::vector<std::string> DayView::metric_names() const {
  if (!metric_names_) metric_names_ = store::metric_names(db_);
  return *metric_names_;
}

const FxRates& DayView::rates_for(const std::string&, const std::string&, Date) const {
  if (!rates_) {
    rates_.emplace();
    for (const auto& row : store::list_fx_rates(db_))
      rates_->add(row.base, row.quote, row.date, row.rate);
  }
  return *rates_;
}

std::optional<Date> DayView::latest_close_day() const {
  // Dates are compared as the ledger stores them (ISO text) and only the
  // latest must parse, as before; a close that does not parse keeps none
  // (close() then reads the rows and stops at it when asked about it).
  const auto rows = store::latest_closes(db_);
  const store::LatestClose* latest = nullptr;
  for (const auto& r : rows)
    if (!latest || r.date > latest->date) latest = &r;
  latest_.reset();
  if (!latest) {
    latest_.emplace();
    return std::nullopt;
  }
  const Date day = Date::parse(latest->date);
  std::unordered_map<std::int64_t, Close> kept;
  kept.reserve(rows.size());
  for (const auto& r : rows) {
    const auto close = Decimal::try_parse(r.close);
    const auto date = Date::try_parse(r.date);
    if (!close || !date) return day;
    kept.emplace(r.security_id, Close{*date, *close});
  }
  latest_ = std::move(kept);
  return day;
}

std::optional<Date> DayView::first_close_after(std::int64_t security_id, Date day) const {
  auto& rows = this->rows().first_close_after(security_id, text(day));
  if (!rows.next()) return std::nullopt;
  const Date d = Date::parse(rows.text(0));
  rows.reset();
  return d;
}

}  // namespace keel::market
