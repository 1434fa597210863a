#include "backtest/history.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/error.h"
#include "core/text.h"
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
  return load_history(db, std::vector<rules::Rule>{rule}, from, to, extra);
}

History load_history(store::Database& db, const std::vector<rules::Rule>& rules, Date from, Date to,
                     const std::vector<std::string>& extra) {
  const market::DayView catalog(db);
  const auto ledger_currency = store::ledger_currency(db);
  // A track record looks back from the first decision day.
  Date first = from;
  for (const auto& rule : rules)
    if (rule.track_record)
      first = std::min(first, rules::TrackRecord::first_day(*rule.track_record, from));
  std::vector<std::int64_t> extra_ids;
  for (const auto& symbol : extra)
    if (const Security* s = catalog.security(symbol)) extra_ids.push_back(s->id);
  market::Series::Request request;
  request.securities.emplace();
  std::optional<std::string> currency;
  std::vector<std::string> notes;
  for (std::size_t i = 0; i < rules.size(); ++i) {
    const rules::Inputs inputs(rules[i], catalog, ledger_currency);
    if (i > 0 && inputs.currency() != currency)
      throw InputError(
          fmt::format("RULES: {} trades in {} and {} in {}; rules are compared in one currency",
                      printable(rules.front().source), currency.value_or("no currency"),
                      printable(rules[i].source), inputs.currency().value_or("no currency")));
    currency = inputs.currency();
    for (const auto& n : inputs.notes())
      if (std::find(notes.begin(), notes.end(), n) == notes.end()) notes.push_back(n);
    // The rule's universe, sleeves, extras and what their actions hand out,
    // and its metrics.
    const auto one = inputs.series_request(catalog, first, to, extra_ids);
    request.securities->insert(request.securities->end(), one.securities->begin(),
                               one.securities->end());
    for (const auto& metric : one.metrics)
      if (std::find(request.metrics.begin(), request.metrics.end(), metric) ==
          request.metrics.end())
        request.metrics.push_back(metric);
  }
  std::sort(request.securities->begin(), request.securities->end());
  request.securities->erase(std::unique(request.securities->begin(), request.securities->end()),
                            request.securities->end());
  request.from = first;
  request.to = to;
  return History{market::Series::load(db, request), currency, std::move(notes)};
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
