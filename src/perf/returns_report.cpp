#include "perf/returns_report.h"

#include <fmt/format.h>

#include <map>

#include "core/error.h"
#include "core/text.h"
#include "ledger/accounts.h"
#include "ledger/posting.h"
#include "market/day_view.h"
#include "market/series.h"
#include "store/ledger_store.h"

namespace keel::perf {

namespace {

struct Scope {
  std::string name = "all accounts";
  std::optional<std::int64_t> account_id;  // nullopt: the whole ledger
  std::string currency;                    // the reporting currency
};

Scope scope_of(store::Database& db, const std::optional<std::string>& account_name) {
  Scope scope;
  if (account_name) {
    const auto account = store::find_account(db, *account_name);
    if (!account)
      throw InputError(
          fmt::format("--account: there is no account named '{}'", printable(*account_name)));
    scope.account_id = account->id;
    scope.name = account->name;
    scope.currency = account->currency;
  } else {
    const auto shared = ledger::one_currency(store::list_accounts(db), "returns");
    scope.currency = shared ? *shared : store::ledger_currency(db).value_or(std::string());
  }
  return scope;
}

ReturnsReport report_of(store::Database& db, const LedgerData& data, const Scope& scope,
                        const ReturnsRequest& request) {
  ReturnsReport report;
  report.scope = scope.name;
  const std::optional<std::int64_t> account_id = scope.account_id;
  const LedgerLog& log = data.log;
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
  if (data.latest_close && *data.latest_close > report.as_of) report.as_of = *data.latest_close;
  if (request.as_of) report.as_of = *request.as_of;
  report.period = resolve_period(request.period, report.as_of, report.inception);

  const Date before = report.period.from.plus_days(-1);
  std::optional<Security> bench;
  if (request.benchmark) {
    bench = store::find_security(db, *request.benchmark);
    if (!bench)
      throw InputError(fmt::format("--benchmark: there is no security with symbol '{}'",
                                   printable(*request.benchmark)));
  }
  market::Series::Request span;
  span.from = before;
  span.to = report.period.to;
  span.currencies = data.currencies;
  const auto prices = market::Series::load(db, span);
  auto series =
      build_series(log, prices, account_id, report.period.from, report.period.to, scope.currency);
  report.income = series.income;
  report.tax = series.tax;
  report.fees = series.fees;

  for (const auto id : series.unpriced) {
    const auto it = data.symbols.find(id);
    report.unpriced.push_back(it == data.symbols.end() ? std::string() : it->second);
  }

  PerfInput input;
  input.from = report.period.from;
  input.to = report.period.to;
  input.series = std::move(series.series);
  input.risk_free_annual = request.risk_free_annual;
  if (bench) {
    std::vector<LevelPoint> levels;
    for (auto& c : prices.closes(bench->id))
      levels.push_back(LevelPoint{c.day, std::move(c.price)});
    if (levels.empty() || levels.front().day > before) {
      const auto first = market::DayView(db).first_close_after(bench->id, before);
      throw InputError(fmt::format(
          "--benchmark {}: needs a close on or before {}, the day before the period; {}",
          printable(bench->symbol), before.str(),
          first ? "its first close is on " + first->str() : std::string("it has no closes")));
    }
    input.benchmark = std::move(levels);
    report.benchmark = bench->symbol;
  }
  report.result = measure(input);
  return report;
}

}  // namespace

LedgerData LedgerData::load(store::Database& db) {
  LedgerData data{ledger::load_log(db), {}, market::DayView(db).latest_close_day(), {}};
  const auto securities = store::list_securities(db);
  for (const auto& s : securities) data.symbols[s.id] = s.symbol;
  data.currencies = currencies_of(data.log, securities);
  return data;
}

// The scope is checked before anything is loaded, so an unknown account is
// reported as such whatever the rest of the ledger holds.
ReturnsReport returns_report(store::Database& db, const ReturnsRequest& request) {
  const Scope scope = scope_of(db, request.account);
  return report_of(db, LedgerData::load(db), scope, request);
}

ReturnsReport returns_report(store::Database& db, const LedgerData& data,
                             const ReturnsRequest& request) {
  return report_of(db, data, scope_of(db, request.account), request);
}

}  // namespace keel::perf
