// Market data in the ledger: writing it in bulk and reading it back in
// keel's canonical order (for export). What was known on a day is
// src/market/'s question, asked through store/market_rows.h.
//
//  - A metric row is a figure for the period ending `date`, first knowable on
//    `known_on` (>= date). A restatement is another row with the same date
//    and a later known_on; both are kept.
//
// Writing
//  - MarketWriter adds rows inside the caller's WriteTransaction. Each call
//    says what happened to one row: added, unchanged (identical row already
//    there), replaced (different value, replace mode), conflict (different
//    value, `existing` says what is stored) or duplicate (the same key came
//    earlier through this writer). Memory stays bounded in the number of
//    rows: prices are held compactly (store/price_buffer.h) up to a bound,
//    and other keys are tracked in SQLite, only where the ledger already held
//    rows in the same date range for that security.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "model/security.h"
#include "store/database.h"

namespace keel::store {

enum class Upsert { added, unchanged, replaced, conflict, duplicate };

// Turns foreign-key checks off for a bulk load whose security ids come from
// the security table itself, and back on afterwards. Take it before the
// WriteTransaction: SQLite ignores the setting inside a transaction.
class ForeignKeyPause {
 public:
  explicit ForeignKeyPause(Database& db);
  ~ForeignKeyPause();
  ForeignKeyPause(const ForeignKeyPause&) = delete;
  ForeignKeyPause& operator=(const ForeignKeyPause&) = delete;

 private:
  Database& db_;
};

class MarketWriter {
 public:
  // The caller holds a WriteTransaction on `db` for the writer's lifetime.
  // Buffered prices are written whenever they hold `price_buffer_bytes`
  // (64 MiB: about ten million daily closes) and at finish_prices().
  static constexpr std::size_t kPriceBufferBytes = std::size_t{64} << 20;
  MarketWriter(Database& db, bool replace, std::size_t price_buffer_bytes = kPriceBufferBytes);
  ~MarketWriter();
  MarketWriter(const MarketWriter&) = delete;
  MarketWriter& operator=(const MarketWriter&) = delete;

  static constexpr std::size_t kUnknown = static_cast<std::size_t>(-1);
  // A handle for a security of the ledger, or kUnknown.
  std::size_t security(std::string_view symbol);

  // Text arguments are canonical (ISO dates, Decimal::str() numbers).
  //
  // Prices are the bulk of most imports: they are buffered and written in
  // key order (security id, then day), so that where the ledger holds no
  // later closes the table only grows at its end, however the file is
  // ordered. Outcomes other than added/unchanged/replaced reach `on_problem`
  // with the row's line, possibly later than the call; finish_prices()
  // writes what is buffered.
  using PriceProblem = std::function<void(std::uint64_t line, Upsert outcome, std::size_t sec,
                                          std::string_view date, std::string_view existing)>;
  void on_price_problem(PriceProblem fn);
  void price(std::size_t sec, std::string_view date, std::string_view close, std::uint64_t line);
  struct Counts {
    std::uint64_t added = 0, unchanged = 0, replaced = 0;
  };
  Counts finish_prices();
  const std::string& symbol(std::size_t sec) const;
  Upsert metric(std::size_t sec, std::string_view name, std::string_view date,
                std::string_view known_on, std::string_view value, std::string& existing);
  Upsert distribution(std::size_t sec, std::string_view ex_date, std::string_view pay_date,
                      std::string_view per_share, std::string& existing);
  // Recorded splits never change: a different ratio is a conflict even when
  // replacing.
  Upsert split(std::size_t sec, std::string_view date, std::string_view ratio,
               std::string& existing);
  // By symbol; `existing` describes the stored security on conflict.
  Upsert security_row(const Security& security, std::string& existing);

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// Reading market data back in keel's canonical order (symbol, then key).
void for_each_price(Database& db,
                    const std::function<void(const std::string& symbol, std::string_view date,
                                             std::string_view close)>& fn);
struct MetricRow {
  std::string_view date, name, value, known_on;
};
void for_each_metric(Database& db,
                     const std::function<void(const std::string& symbol, const MetricRow&)>& fn);
void for_each_distribution(
    Database& db,
    const std::function<void(const std::string& symbol, std::string_view ex_date,
                             std::string_view pay_date, std::string_view per_share)>& fn);

struct ImportRun {
  std::int64_t id = 0;
  std::string what;
  std::string file_name;
  std::string file_sha256;
  std::int64_t rows_read = 0;
  std::int64_t rows_added = 0;
  std::string imported_at;
};
std::int64_t record_import_run(Database& db, const ImportRun& run);  // sets imported_at
std::vector<ImportRun> list_import_runs(Database& db);               // oldest first
std::optional<ImportRun> find_import_run(Database& db, std::string_view what,
                                         std::string_view sha256);  // latest with this digest

}  // namespace keel::store
