// Market data rows out of the ledger, in key order, with bound parameters.
// Nothing here decides what was known on a day: src/market/ does, from these
// rows.
//
// Contract
//  - Each reader runs one prepared statement and returns it positioned before
//    its first row: call next() until it gives false (or reset() to stop
//    early). Columns come back as stored: ISO dates and canonical decimal
//    text. Views stay valid until the next step; running a reader again
//    restarts it.
//  - Days are ISO text "YYYY-MM-DD" (the form the ledger stores).
//  - A MarketRows borrows the Database and must not outlive it.
//  - SQLite failures throw as store/statement.h says.
#pragma once

#include <array>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "store/database.h"
#include "store/statement.h"

namespace keel::store {

class MarketRows {
 public:
  explicit MarketRows(Database& db);
  ~MarketRows();
  MarketRows(const MarketRows&) = delete;
  MarketRows& operator=(const MarketRows&) = delete;

  // (date, close) of one security dated on or before `day`, newest first.
  Statement& closes_until(std::int64_t security_id, std::string_view day);
  // Scans hand each row to `take` from inside SQLite's own scan (an
  // application-defined aggregate): no return to the caller for each row,
  // which halves the cost of reading millions of rows. Rows come in key
  // order, as text; `take` returns false to stop (rows after a span's end).
  // An exception thrown by `take` stops the scan and is thrown again here.
  using Row = std::array<std::string_view, 3>;
  using Take = bool (*)(void* context, const Row& row);
  // (date, close, "") of one security dated on or after `from`.
  void scan_closes(std::int64_t security_id, std::string_view from, Take take, void* context);
  // (date, "", "") of one security's closes on or after `from`.
  void scan_close_days(std::int64_t security_id, std::string_view from, Take take, void* context);
  // (date, known_on, value) of one security's figures of `metric`, by period
  // and then known_on.
  void scan_figures(std::int64_t security_id, std::string_view metric, Take take, void* context);
  template <typename F>
  void scan_closes(std::int64_t security_id, std::string_view from, F& f) {
    scan_closes(security_id, from, &call<F>, &f);
  }
  template <typename F>
  void scan_close_days(std::int64_t security_id, std::string_view from, F& f) {
    scan_close_days(security_id, from, &call<F>, &f);
  }
  template <typename F>
  void scan_figures(std::int64_t security_id, std::string_view metric, F& f) {
    scan_figures(security_id, metric, &call<F>, &f);
  }

  // The closes of one security packed (market/close_pack.h), when the ledger
  // keeps a pack of them: the last day the pack covers ('' for none) and
  // its bytes. The views stay valid until the next call.
  struct PackRow {
    std::string_view last_day;
    std::string_view packed;
  };
  std::optional<PackRow> close_pack(std::int64_t security_id);

  // (date) of one security's first close after `day`: at most one row.
  Statement& first_close_after(std::int64_t security_id, std::string_view day);

  // (date, known_on, value) of one security's figures of `metric` known on
  // or before `day`: the latest period first, and within a period the
  // latest known_on first.
  Statement& figures_until(std::int64_t security_id, std::string_view metric, std::string_view day);

  // (security_id, ex_date, pay_date, per_share) with ex_date in [from, to],
  // by ex_date, then security; of one security or of all.
  Statement& distributions_between(std::optional<std::int64_t> security_id, std::string_view from,
                                   std::string_view to);
  // (security_id, date, ratio) with date in [from, to], by date, then
  // security; of one security or of all.
  Statement& splits_between(std::optional<std::int64_t> security_id, std::string_view from,
                            std::string_view to);

 private:
  template <typename F>
  static bool call(void* f, const Row& row) {
    return (*static_cast<F*>(f))(row);
  }
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// Close packs are derived data: a pack holds every close of its security
// dated on or before its last day, and is deleted with any change to a close
// dated on or before that day (triggers, migration 0012), so the closes are
// always the record; closes dated after it are the pack's tail, read from the
// rows. change_count() is SQLite's data_version: it moves when another
// connection commits. keep_close_packs() writes packs in one write transaction
// only if nothing else has been committed since `since` (they were read from
// what is still stored), the ledger can be written and no transaction is open;
// otherwise, and when the ledger is busy or the write fails, it keeps nothing
// and says false: packs only save time.
struct KeptPack {
  std::int64_t security_id = 0;
  std::string last_day;  // ISO day of the last close packed; '' for none
  std::string packed;
};
bool can_keep_close_packs(Database& db);
std::int64_t change_count(Database& db);
bool keep_close_packs(Database& db, const std::vector<KeptPack>& packs, std::int64_t since);

// Each security's latest close, (security_id, date, close) as stored, by
// security id; a security without closes is left out. One statement, one
// seek through the (security_id, date) key per security (two where a date
// is not 10 bytes long).
struct LatestClose {
  std::int64_t security_id = 0;
  std::string date;
  std::string close;
};
std::vector<LatestClose> latest_closes(Database& db);
// Names of the stored metrics, ascending, one index seek per name.
std::vector<std::string> metric_names(Database& db);

}  // namespace keel::store
