#include "backtest/history.h"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include <algorithm>
#include <set>

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

std::optional<Decimal> History::value_close(std::int64_t id, Date day) const {
  const int c = market.column(id);
  const std::size_t r = market.row(day);
  if (c < 0 || !market.has(r, c)) return std::nullopt;
  if (!foreign(c)) return market.exact(r, c);
  const Decimal rate = fx_exact(r, c);
  if (rate.is_zero()) return std::nullopt;  // no rate known yet on that day
  return market.exact(r, c) * rate;
}

void History::load_rates() {
  fx_of_.assign(static_cast<std::size_t>(market.columns()), -1);
  fx_rates_.clear();
  fx_double_.clear();
  if (convert == rules::Convert::no || !currency) return;
  std::vector<std::string> others;
  // Rows are the span's calendar days (market::Series::row).
  std::vector<Date> days;
  for (Date d = market.from(); d <= market.to(); d = d.plus_days(1)) days.push_back(d);
  for (int c = 0; c < market.columns(); ++c) {
    const std::string& code = security(market.security_id(c)).currency;
    if (code == *currency) continue;
    auto it = std::find(others.begin(), others.end(), code);
    if (it == others.end()) {
      others.push_back(code);
      std::vector<Decimal> rates(days.size());
      std::vector<double> approx(days.size(), 0.0);
      for (std::size_t r = 0; r < days.size(); ++r)
        if (const auto q = market.try_rate(code, *currency, days[r])) {
          rates[r] = q->rate;
          approx[r] = q->rate.to_double();
        }
      fx_rates_.push_back(std::move(rates));
      fx_double_.push_back(std::move(approx));
      it = others.end() - 1;
    }
    fx_of_[static_cast<std::size_t>(c)] = static_cast<int>(it - others.begin());
  }
}

History load_history(store::Database& db, const rules::Rule& rule, Date from, Date to,
                     const std::vector<std::string>& extra, rules::Convert convert) {
  return load_history(db, std::vector<rules::Rule>{rule}, from, to, extra, convert);
}

History load_history(store::Database& db, const std::vector<rules::Rule>& rules, Date from, Date to,
                     const std::vector<std::string>& extra, rules::Convert convert) {
  const market::DayView catalog(db);
  const auto ledger_currency = store::ledger_currency(db);
  if (!ledger_currency) convert = rules::Convert::no;
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
    const rules::Inputs inputs(rules[i], catalog, ledger_currency, convert);
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
  if (convert == rules::Convert::yes) {
    std::set<std::string> codes{*currency};
    for (const std::int64_t id : *request.securities) codes.insert(catalog.security(id)->currency);
    request.currencies.assign(codes.begin(), codes.end());
  }
  History h{market::Series::load(db, request), currency, std::move(notes), convert};
  h.load_rates();
  std::set<std::string> foreign;
  for (int c = 0; c < h.market.columns(); ++c)
    if (h.foreign(c)) foreign.insert(h.security(h.market.security_id(c)).currency);
  if (!foreign.empty())
    h.notes.push_back(fmt::format(
        "values are in {}: closes, fills, fees and distributions of names priced in {} are "
        "converted at each day's rate (the latest on or before it); a name has no price on a "
        "day without one",
        *currency, fmt::join(foreign, ", ")));
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
