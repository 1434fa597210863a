#include "backtest/history.h"

#include <fmt/format.h>

#include <algorithm>
#include <set>
#include <string>

#include "core/error.h"
#include "core/text.h"
#include "store/ledger_store.h"
#include "store/market_rows.h"

namespace keel::backtest {

std::vector<rules::Candidate> History::candidates(
    const rules::Rule& rule, Date day, const std::unordered_set<std::int64_t>& held) const {
  (void)rule;
  std::vector<rules::Candidate> out;
  out.reserve(universe.size());
  for (std::int64_t id : universe) {
    rules::Candidate c;
    c.security_id = id;
    c.symbol = security(id).symbol;
    c.held = held.count(id) > 0;
    if (auto m = metric.at(id, day)) {
      c.figure = rules::Figure{m->value, m->date, m->known_on};
      c.has_price = prices.at(id, day).has_value();
    }
    out.push_back(std::move(c));
  }
  return out;
}

History load_history(store::Database& db, const rules::Rule& rule) {
  History h;
  h.securities = store::list_securities(db);
  std::unordered_map<std::string, std::int64_t> by_symbol;
  for (std::size_t i = 0; i < h.securities.size(); ++i) {
    h.index[h.securities[i].id] = i;
    by_symbol[h.securities[i].symbol] = h.securities[i].id;
  }
  for (const auto& sl : rule.weights.sleeves) {
    const auto it = by_symbol.find(sl.symbol);
    if (it == by_symbol.end())
      rule.fail("sleeve.symbol",
                fmt::format("no security '{}' in the ledger", printable(sl.symbol)));
    h.sleeve_ids.push_back(it->second);
  }
  const std::set<std::int64_t> sleeves(h.sleeve_ids.begin(), h.sleeve_ids.end());
  std::map<std::string, std::int64_t> chosen;  // by symbol
  if (rule.universe == rules::Universe::list) {
    for (const auto& sym : rule.symbols) {
      const auto it = by_symbol.find(sym);
      if (it == by_symbol.end())
        rule.fail("scope.symbols", fmt::format("no security '{}' in the ledger", printable(sym)));
      chosen[sym] = it->second;
    }
  } else {
    for (const auto& s : h.securities) {
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
  for (const auto& [sym, id] : chosen) h.universe.push_back(id);
  const auto names = store::metric_names(db);
  if (std::find(names.begin(), names.end(), rule.screen.metric) == names.end()) {
    std::string why =
        fmt::format("the ledger holds no figures for metric '{}'", printable(rule.screen.metric));
    if (auto near = rules::nearest(rule.screen.metric, names))
      why += fmt::format("; did you mean '{}'?", printable(*near));
    else if (names.empty())
      why += "; import metrics first ('keel import metrics FILE')";
    rule.fail("screen.metric", why);
  }

  h.prices = store::PriceBook::load(db);
  h.metric = store::MetricHistory::load(db, rule.screen.metric);
  h.days = h.prices.all_days();
  for (const auto& s : store::list_splits(db))
    h.splits[s.date].push_back(SplitEvent{s.security_id, s.ratio});
  store::for_each_distribution(db, [&](const std::string& symbol, std::string_view ex,
                                       std::string_view pay, std::string_view per_share) {
    const std::int64_t id = by_symbol.at(symbol);
    const Date ex_date = Date::parse(ex);
    h.distributions[ex_date].push_back(
        Distribution{id, ex_date, Date::parse(pay), Decimal::parse(per_share)});
  });
  return h;
}

std::vector<Date> rebalance_days(const std::vector<Date>& trading_days, Date from, Date to,
                                 int every_months) {
  std::vector<Date> month_last;
  for (std::size_t i = 0; i < trading_days.size(); ++i) {
    const Date d = trading_days[i];
    const bool last = i + 1 == trading_days.size() || trading_days[i + 1].month() != d.month() ||
                      trading_days[i + 1].year() != d.year();
    if (last && d >= from && d <= to) month_last.push_back(d);
  }
  std::vector<Date> out;
  for (std::size_t i = 0; i < month_last.size(); i += static_cast<std::size_t>(every_months))
    out.push_back(month_last[i]);
  return out;
}

}  // namespace keel::backtest
