#include "perf/returns_report.h"

#include <fmt/format.h>

#include <algorithm>
#include <iterator>
#include <map>
#include <stdexcept>
#include <tuple>

#include "core/error.h"
#include "core/text.h"
#include "ledger/accounts.h"
#include "ledger/holdings.h"
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

Scope scope_of(store::Database& db, const std::optional<std::string>& account_name,
               const std::optional<std::string>& currency) {
  Scope scope;
  if (account_name) {
    const auto account = store::find_account(db, *account_name);
    if (!account)
      throw InputError(
          fmt::format("--account: there is no account named '{}'", printable(*account_name)));
    scope.account_id = account->id;
    scope.name = account->name;
  }
  scope.currency = ledger::reporting_currency(db, currency, account_name);
  return scope;
}

// The ledger's first and last live transaction days.
std::pair<Date, Date> live_span(const LedgerLog& log) {
  const auto voided = voided_ids(log.transactions);
  std::optional<Date> first, last;
  for (const auto& t : log.transactions) {
    if (t.kind == TxnKind::void_entry || voided.count(t.id)) continue;
    if (!first || t.date < *first) first = t.date;
    if (!last || t.date > *last) last = t.date;
  }
  if (!first) throw InputError("the ledger has no transactions yet; there is nothing to measure");
  return {*first, *last};
}

std::optional<Security> benchmark_of(store::Database& db, const ReturnsRequest& request) {
  if (!request.benchmark) return std::nullopt;
  auto bench = store::find_security(db, *request.benchmark);
  if (!bench)
    throw InputError(fmt::format("--benchmark: there is no security with symbol '{}'",
                                 printable(*request.benchmark)));
  return bench;
}

// Every request resolved first, then one series over the union of their
// periods, sliced for each (ledger_series.h).
PeriodReports reports_of(store::Database& db, const LedgerData& data, const Scope& scope,
                         const std::vector<ReturnsRequest>& requests,
                         const std::vector<Date>& book_days = {}) {
  PeriodReports out;
  std::vector<ReturnsReport>& reports = out.reports;
  reports.resize(requests.size());
  std::vector<std::optional<Security>> benches;
  std::optional<Date> from, to;
  for (std::size_t i = 0; i < requests.size(); ++i) {
    ReturnsReport& report = reports[i];
    const ResolvedPeriod resolved = resolve(data, requests[i]);
    report.scope = scope.name;
    report.currency = scope.currency;
    report.inception = resolved.inception;
    report.as_of = resolved.as_of;
    report.period = resolved.period;
    benches.push_back(benchmark_of(db, requests[i]));
    if (!from || report.period.from < *from) from = report.period.from;
    if (!to || report.period.to > *to) to = report.period.to;
  }
  if (requests.empty()) return out;

  market::Series::Request span;
  span.from = from->plus_days(-1);
  span.to = *to;
  span.currencies = data.currencies;
  span.currencies.push_back(scope.currency);
  // Only the closes of what the scope holds, and of the benchmarks, are read.
  span.securities = securities_held(data.log, scope.account_id);
  for (const auto& bench : benches)
    if (bench) span.securities->push_back(bench->id);
  const auto prices = market::Series::load(db, span);
  auto built =
      build_series(data.log, prices, scope.account_id, *from, *to, scope.currency, book_days);
  out.books = std::move(built.books);

  for (std::size_t i = 0; i < requests.size(); ++i) {
    ReturnsReport& report = reports[i];
    const Date before = report.period.from.plus_days(-1);
    auto series = slice(built, report.period.from, report.period.to);
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
    input.risk_free_annual = requests[i].risk_free_annual;
    if (const auto& bench = benches[i]) {
      std::vector<LevelPoint> levels;
      // Unhedged: each close in the reporting currency at its day's rate.
      const bool convert = bench->currency != scope.currency;
      for (auto& c : prices.closes(bench->id)) {
        if (c.day > report.period.to) continue;
        if (convert) {
          try {
            c.price *= prices.rate(bench->currency, scope.currency, c.day).rate;
          } catch (const InputError& e) {
            throw InputError(fmt::format("--benchmark {}: its close of {} in {}: {}",
                                         printable(bench->symbol), c.day.str(), scope.currency,
                                         e.what()));
          }
        }
        levels.push_back(LevelPoint{c.day, std::move(c.price)});
      }
      if (convert) report.benchmark_converted_from = bench->currency;
      // measure() reads the latest level on or before `before`; earlier ones
      // (of a longer period in the same load) are left out.
      auto opening = std::upper_bound(levels.begin(), levels.end(), before,
                                      [](Date d, const LevelPoint& p) { return d < p.day; });
      if (opening == levels.begin()) {
        const auto first = market::DayView(db).first_close_after(bench->id, before);
        throw InputError(fmt::format(
            "--benchmark {}: needs a close on or before {}, the day before the period; {}",
            printable(bench->symbol), before.str(),
            first ? "its first close is on " + first->str() : std::string("it has no closes")));
      }
      levels.erase(levels.begin(), std::prev(opening));
      input.benchmark = std::move(levels);
      report.benchmark = bench->symbol;
    }
    report.result = measure(input);
  }
  return out;
}

// Each account of the scope measured again with its own currency as the
// reporting currency (the same code as the report itself); the benchmark is
// left out, since it is compared in the reporting currency only.
void add_local(store::Database& db, const LedgerData& data, const ReturnsRequest& request,
               ReturnsReport& report) {
  if (!request.local) return;
  std::vector<Account> accounts;
  if (request.account) {
    accounts.push_back(*store::find_account(db, *request.account));
  } else {
    accounts = store::list_accounts(db);
  }
  for (const auto& account : accounts) {
    ReturnsRequest one = request;
    one.account = account.name;
    one.currency = std::nullopt;  // the account's own
    one.benchmark = std::nullopt;
    one.local = false;
    const Scope scope = scope_of(db, one.account, one.currency);
    auto measured = reports_of(db, data, scope, {one}).reports.front();
    report.local.push_back(
        LocalReturns{account.name, measured.currency, std::move(measured.result)});
  }
}

}  // namespace

ResolvedPeriod resolve(const LedgerData& data, const ReturnsRequest& request) {
  ResolvedPeriod out;
  Date last;
  std::tie(out.inception, last) = live_span(data.log);
  out.as_of = last;
  if (data.latest_close && *data.latest_close > out.as_of) out.as_of = *data.latest_close;
  if (request.as_of) out.as_of = *request.as_of;
  out.period = resolve_period(request.period, out.as_of, out.inception);
  return out;
}

LedgerData LedgerData::load(store::Database& db) {
  // No report built on the series reads a transaction's ref, row hash or note.
  LedgerData data{ledger::load_log(db, store::TxnFields::replay),
                  {},
                  market::DayView(db).latest_close_day(),
                  {}};
  const auto securities = store::list_securities(db);
  for (const auto& s : securities) data.symbols[s.id] = s.symbol;
  data.currencies = currencies_of(data.log, securities);
  return data;
}

// The scope is checked before anything is loaded, so an unknown account is
// reported as such whatever the rest of the ledger holds.
ReturnsReport returns_report(store::Database& db, const ReturnsRequest& request) {
  const Scope scope = scope_of(db, request.account, request.currency);
  const LedgerData data = LedgerData::load(db);
  ReturnsReport report = reports_of(db, data, scope, {request}).reports.front();
  add_local(db, data, request, report);
  return report;
}

ReturnsReport returns_report(store::Database& db, const LedgerData& data,
                             const ReturnsRequest& request) {
  ReturnsReport report =
      reports_of(db, data, scope_of(db, request.account, request.currency), {request})
          .reports.front();
  add_local(db, data, request, report);
  return report;
}

PeriodReports returns_reports(store::Database& db, const LedgerData& data,
                              const std::optional<std::string>& account,
                              const std::vector<ReturnsRequest>& requests,
                              const std::vector<Date>& book_days) {
  for (const auto& r : requests)
    if (r.account != account || r.currency != requests.front().currency)
      throw std::invalid_argument("returns_reports: every request must be of the one scope");
  return reports_of(
      db, data, scope_of(db, account, requests.empty() ? std::nullopt : requests.front().currency),
      requests, book_days);
}

}  // namespace keel::perf
