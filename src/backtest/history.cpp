#include "backtest/history.h"

#include <algorithm>

#include "market/day_view.h"
#include "rules/inputs.h"
#include "rules/track_record.h"
#include "store/ledger_store.h"

namespace keel::backtest {

std::optional<Decimal> History::close(std::int64_t id, Date day) const {
  const int c = market.column(id);
  const std::size_t r = market.row(day);
  if (c < 0 || !market.has(r, c)) return std::nullopt;
  return market.exact(r, c);
}

History load_history(store::Database& db, const rules::Rule& rule, Date from, Date to,
                     const std::vector<std::string>& extra) {
  const market::DayView catalog(db);
  const rules::Inputs inputs(rule, catalog, store::ledger_currency(db));
  std::vector<std::int64_t> extra_ids;
  for (const auto& symbol : extra)
    if (const Security* s = catalog.security(symbol)) extra_ids.push_back(s->id);
  // A track record looks back from the first decision day.
  const Date first = rule.track_record
                         ? std::min(from, rules::TrackRecord::first_day(*rule.track_record, from))
                         : from;
  const auto request = inputs.series_request(catalog, first, to, extra_ids);
  History h{market::Series::load(db, request), inputs.currency(), inputs.notes()};
  return h;
}

std::vector<Date> rebalance_days(const std::vector<Date>& trading_days, std::optional<Date> next,
                                 Date from, Date to, int every_months) {
  const auto month_last = rules::month_ends(trading_days, next, from, to);
  std::vector<Date> out;
  for (std::size_t i = 0; i < month_last.size(); i += static_cast<std::size_t>(every_months))
    out.push_back(month_last[i]);
  return out;
}

}  // namespace keel::backtest
