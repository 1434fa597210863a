#include "perf/returns_report.h"

#include <fmt/format.h>

#include <map>

#include "core/error.h"
#include "core/text.h"
#include "ledger/posting.h"
#include "store/ledger_store.h"
#include "store/price_write.h"
#include "store/prices.h"

namespace keel::perf {

ReturnsReport returns_report(store::Database& db, const ReturnsRequest& request) {
  ReturnsReport report;
  std::optional<std::int64_t> account_id;
  report.scope = "all accounts";
  if (request.account) {
    const auto account = store::find_account(db, *request.account);
    if (!account)
      throw InputError(
          fmt::format("--account: there is no account named '{}'", printable(*request.account)));
    account_id = account->id;
    report.scope = account->name;
  }

  const LedgerLog log = ledger::load_log(db);
  const auto voided = voided_ids(log.transactions);
  std::optional<Date> first, last;
  for (const auto& t : log.transactions) {
    if (t.kind == TxnKind::void_entry || voided.count(t.id)) continue;
    if (!first || t.date < *first) first = t.date;
    if (!last || t.date > *last) last = t.date;
  }
  if (!first) throw InputError("the ledger has no transactions yet; there is nothing to measure");
  report.inception = *first;
  report.as_of = *last;
  const auto prices = store::PriceBook::load(db);
  if (auto day = prices.last_day(); day && *day > report.as_of) report.as_of = *day;
  if (request.as_of) report.as_of = *request.as_of;
  report.period = resolve_period(request.period, report.as_of, report.inception);

  auto series = build_series(log, prices, account_id, report.period.from, report.period.to);
  report.income = series.income;
  report.tax = series.tax;
  report.fees = series.fees;

  std::map<std::int64_t, std::string> symbols;
  for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;
  for (const auto id : series.unpriced) report.unpriced.push_back(symbols[id]);

  PerfInput input;
  input.from = report.period.from;
  input.to = report.period.to;
  input.series = std::move(series.series);
  input.risk_free_annual = request.risk_free_annual;
  if (request.benchmark) {
    const auto security = store::find_security(db, *request.benchmark);
    if (!security)
      throw InputError(fmt::format("--benchmark: there is no security with symbol '{}'",
                                   printable(*request.benchmark)));
    const Date before = report.period.from.plus_days(-1);
    std::vector<LevelPoint> levels;
    for (auto& [day, close] : store::closes_of(db, security->id))
      levels.push_back(LevelPoint{day, std::move(close)});
    if (levels.empty() || levels.front().day > before)
      throw InputError(fmt::format(
          "--benchmark {}: needs a close on or before {}, the day before the period; {}",
          printable(security->symbol), before.str(),
          levels.empty() ? std::string("it has no closes")
                         : "its first close is on " + levels.front().day.str()));
    input.benchmark = std::move(levels);
    report.benchmark = security->symbol;
  }
  report.result = measure(input);
  return report;
}

}  // namespace keel::perf
