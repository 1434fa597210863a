#include "backtest/history.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <set>
#include <string>
#include <unordered_map>

#include "core/error.h"
#include "core/text.h"
#include "market/day_view.h"

namespace keel::backtest {

std::optional<Decimal> History::close(std::int64_t id, Date day) const {
  const int c = market.column(id);
  const std::size_t r = market.row(day);
  if (c < 0 || !market.has(r, c)) return std::nullopt;
  return market.exact(r, c);
}

std::vector<rules::Candidate> History::candidates(
    Date day, const std::unordered_set<std::int64_t>& held) const {
  figures.advance_to(day);
  const std::size_t r = market.row(day);
  std::vector<rules::Candidate> out;
  out.reserve(universe.size());
  for (std::int64_t id : universe) {
    const int c = market.column(id);
    rules::Candidate cand;
    cand.security_id = id;
    cand.symbol = security(id).symbol;
    cand.held = held.count(id) > 0;
    if (const auto* f = figures.at(c)) {
      cand.figure = rules::Figure{f->value, f->period, f->known_on};
      cand.has_price = market.has(r, c);
    }
    out.push_back(std::move(cand));
  }
  return out;
}

History load_history(store::Database& db, const rules::Rule& rule, Date from, Date to,
                     const std::vector<std::string>& extra) {
  std::vector<std::int64_t> universe, sleeve_ids;
  const market::DayView catalog(db);
  std::unordered_map<std::string, std::int64_t> by_symbol;
  for (const auto& s : catalog.securities()) by_symbol[s.symbol] = s.id;
  for (const auto& sl : rule.weights.sleeves) {
    const auto it = by_symbol.find(sl.symbol);
    if (it == by_symbol.end())
      rule.fail("sleeve.symbol",
                fmt::format("no security '{}' in the ledger", printable(sl.symbol)));
    sleeve_ids.push_back(it->second);
  }
  const std::set<std::int64_t> sleeves(sleeve_ids.begin(), sleeve_ids.end());
  std::map<std::string, std::int64_t> chosen;  // by symbol
  if (rule.universe == rules::Universe::list) {
    for (const auto& sym : rule.symbols) {
      const auto it = by_symbol.find(sym);
      if (it == by_symbol.end())
        rule.fail("scope.symbols", fmt::format("no security '{}' in the ledger", printable(sym)));
      chosen[sym] = it->second;
    }
  } else {
    for (const auto& s : catalog.securities()) {
      if (s.kind != SecurityKind::stock || sleeves.count(s.id)) continue;
      if (rule.universe == rules::Universe::all_stocks || (s.sector && *s.sector == rule.sector))
        chosen[s.symbol] = s.id;
    }
    if (chosen.empty() && rule.universe == rules::Universe::sector)
      rule.fail("scope.sector",
                fmt::format("no stock in the ledger has sector '{}'", printable(rule.sector)));
    if (chosen.empty())
      throw InputError(fmt::format(
          "{}: the universe is every stock in the ledger, and the ledger holds none; import "
          "securities first",
          printable(rule.source)));
  }
  for (const auto& [sym, id] : chosen) universe.push_back(id);
  const auto names = catalog.metric_names();
  if (std::find(names.begin(), names.end(), rule.screen.metric) == names.end()) {
    std::string why =
        fmt::format("the ledger holds no figures for metric '{}'", printable(rule.screen.metric));
    if (auto near = rules::nearest(rule.screen.metric, names))
      why += fmt::format("; did you mean '{}'?", printable(*near));
    else if (names.empty())
      why += "; import metrics first ('keel import metrics FILE')";
    rule.fail("screen.metric", why);
  }

  std::vector<std::int64_t> ids = universe;
  ids.insert(ids.end(), sleeve_ids.begin(), sleeve_ids.end());
  for (const auto& sym : extra)
    if (const auto it = by_symbol.find(sym); it != by_symbol.end()) ids.push_back(it->second);
  market::Series::Request request;
  request.securities = std::move(ids);
  request.from = from;
  request.to = to;
  request.metrics = {rule.screen.metric};
  auto series = market::Series::load(db, request);
  auto cursor = series.figures(rule.screen.metric);
  return History{std::move(universe), std::move(sleeve_ids), rule.screen.metric, std::move(series),
                 std::move(cursor)};
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
