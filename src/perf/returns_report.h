// Returns of a ledger scope over a period: resolves the period, builds the
// series (perf/ledger_series.h) and measures it (perf/performance.h).
//
// Contract
//  - As-of: the request's, else the later of the latest close and the latest
//    live transaction day. Inception: the first live transaction day.
//  - Benchmark: the closes of the named security, which must have a close on
//    or before the day before the period (InputError naming --benchmark).
//  - Figures are in the reporting currency: the request's `currency`
//    (--currency) when given, else the account's with --account, else the
//    one every account keeps, or the ledger's own when they keep several
//    (ledger::reporting_currency). What is held or moved in another currency
//    converts at the rate of its day (ledger_series.h).
//  - A benchmark in another currency is converted unhedged: each close
//    times the rate of its day (benchmark currency -> reporting currency,
//    exact), so its return includes the currency's move;
//    `benchmark_converted_from` then names its currency.
//  - `local` (--local) adds each account's returns in its own currency: the
//    one account's with `account`, else one per account, by name. Each is
//    returns_report() of the same period with that account and its own
//    currency as the reporting currency, without the benchmark, so the two
//    sets of figures share one implementation.
//  - Throws InputError for an unknown account (naming --account) or security,
//    a ledger without transactions, and whatever resolve_period() and
//    measure() reject.
//  - Several reports of one ledger (the statement measures four periods) can
//    share one LedgerData: the log and the symbols are then read once. It is
//    a copy taken by load(); later changes to the ledger are not in it. The
//    closes of each call are read for it (market::Series); returns_reports()
//    measures several periods with one read and one replay.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "perf/ledger_series.h"
#include "perf/performance.h"
#include "perf/period.h"
#include "store/database.h"

namespace keel::perf {

struct ReturnsRequest {
  std::optional<std::string> account;  // nullopt: the whole ledger
  PeriodRequest period;
  std::optional<Date> as_of;
  std::optional<std::string> benchmark;  // security symbol
  std::optional<Decimal> risk_free_annual;
  std::optional<std::string> currency;  // reporting currency (ISO 4217), else the default
  bool local = false;                   // also each account's returns in its own currency
};

// One account's figures in its own currency (ReturnsRequest::local).
struct LocalReturns {
  std::string account;
  std::string currency;  // the account's own
  PerfResult result;
};

struct ReturnsReport {
  std::string scope;     // account name, or "all accounts"
  std::string currency;  // the reporting currency
  Date as_of;
  Date inception;
  Period period;
  Decimal income, tax, fees;
  std::vector<std::string> unpriced;  // symbols held without any price
  std::optional<std::string> benchmark;
  std::optional<std::string> benchmark_converted_from;  // its currency, when not `currency`
  PerfResult result;
  std::vector<LocalReturns> local;  // filled only when the request asks for it
};

struct LedgerData {
  LedgerLog log;
  std::map<std::int64_t, std::string> symbols;  // security id -> symbol
  std::optional<Date> latest_close;             // the latest day with any close
  std::vector<std::string> currencies;          // every currency in use (currencies_of)
  // The log's transactions without ref, row hash or note
  // (store::TxnFields::replay): nothing measured from it reads them.
  static LedgerData load(store::Database& db);
};

// What a request resolves to before anything is measured (no closes read):
// the ledger's inception and as-of (see above) and the period. Throws as
// resolve_period() does, and InputError for a ledger without transactions.
struct ResolvedPeriod {
  Date inception;
  Date as_of;
  Period period;
};
ResolvedPeriod resolve(const LedgerData& data, const ReturnsRequest& request);

ReturnsReport returns_report(store::Database& db, const ReturnsRequest& request);
ReturnsReport returns_report(store::Database& db, const LedgerData& data,
                             const ReturnsRequest& request);
// Several periods of one scope (every request's account is `account` and
// every request's currency the first's, else std::invalid_argument), measured on one series built
// over their union and sliced (perf::slice): one replay and one load of the closes. Each report
// equals returns_report() of its request. That replay also copies the whole
// ledger's book at the close of each of `book_days` (ascending, none before
// the earliest period's day before; see build_series(): every book but the
// last holds what is held only, the last is whole).
struct PeriodReports {
  std::vector<ReturnsReport> reports;  // one per request, in their order
  std::vector<Book> books;             // one per book day, in their order
};
PeriodReports returns_reports(store::Database& db, const LedgerData& data,
                              const std::optional<std::string>& account,
                              const std::vector<ReturnsRequest>& requests,
                              const std::vector<Date>& book_days = {});

}  // namespace keel::perf
