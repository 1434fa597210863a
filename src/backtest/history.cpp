#include "backtest/history.h"

#include <fmt/format.h>

#include <algorithm>
#include <set>

#include "core/error.h"
#include "core/text.h"
#include "market/day_view.h"
#include "rules/inputs.h"
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
    for (const auto id : inputs.securities()) request.securities->push_back(id);
    for (const auto& n : inputs.notes())
      if (std::find(notes.begin(), notes.end(), n) == notes.end()) notes.push_back(n);
    const auto& metric = rules[i].screen.metric;
    if (std::find(request.metrics.begin(), request.metrics.end(), metric) == request.metrics.end())
      request.metrics.push_back(metric);
  }
  for (const auto& symbol : extra)
    if (const Security* s = catalog.security(symbol)) request.securities->push_back(s->id);
  // What a merger or spin-off of a loaded name hands out must be priced too,
  // in the universe or not (and so on, for an action of that name).
  const auto actions = catalog.actions(std::nullopt, from, to);
  std::sort(request.securities->begin(), request.securities->end());
  request.securities->erase(std::unique(request.securities->begin(), request.securities->end()),
                            request.securities->end());
  for (bool grew = true; grew;) {
    grew = false;
    std::set<std::int64_t> loaded(request.securities->begin(), request.securities->end());
    for (const auto& a : actions)
      if (a.target_id && loaded.count(a.security_id) && !loaded.count(*a.target_id)) {
        request.securities->push_back(*a.target_id);
        loaded.insert(*a.target_id);
        grew = true;
      }
  }
  request.from = from;
  request.to = to;
  return History{market::Series::load(db, request), currency, std::move(notes)};
}

std::vector<Date> rebalance_days(const std::vector<Date>& trading_days, std::optional<Date> next,
                                 Date from, Date to, int every_months) {
  std::vector<Date> month_last;
  for (std::size_t i = 0; i < trading_days.size(); ++i) {
    const Date d = trading_days[i];
    const std::optional<Date> after =
        i + 1 < trading_days.size() ? std::optional<Date>(trading_days[i + 1]) : next;
    const bool last = !after || after->month() != d.month() || after->year() != d.year();
    if (last && d >= from && d <= to) month_last.push_back(d);
  }
  std::vector<Date> out;
  for (std::size_t i = 0; i < month_last.size(); i += static_cast<std::size_t>(every_months))
    out.push_back(month_last[i]);
  return out;
}

}  // namespace keel::backtest
