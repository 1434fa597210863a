// Importing and exporting market data in keel's canonical CSV layouts (or a
// mapped layout), see docs/import-formats.md.
//
// Contract
//  - import_market() reads the whole file in one WriteTransaction. Any bad row
//    (a bad date or number, an unknown symbol, a key repeated in the file, a
//    value conflicting with the ledger without `replace`) refuses the import:
//    ImportRefused lists every error found (up to 50) and the ledger is left
//    exactly as it was.
//  - Rows already in the ledger with the same value add nothing, so importing
//    the same file twice changes nothing the second time.
//  - dry_run validates everything the same way and reports what would change,
//    then rolls back.
//  - An import that changes the ledger is recorded in import_run with the
//    file's SHA-256.
//  - export_market() writes every row of one kind, ordered by symbol then
//    key, as CSV (the canonical layout, so it imports again unchanged) or as a
//    JSON array of objects whose numbers are strings (exact decimals).
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/files.h"
#include "io/csv.h"
#include "io/mapping.h"
#include "store/database.h"
#include "store/market_data.h"

namespace keel::io {

// fx: exchange rates, date,base,quote,rate (one `base` unit buys `rate`
// `quote` units; ISO 4217 codes; the same exactly-once rules as closes).
enum class MarketKind { securities, prices, metrics, distributions, splits, fx };
std::string_view to_string(MarketKind kind);
MarketKind parse_market_kind(std::string_view text);  // throws InputError naming the choices

struct ImportOptions {
  std::optional<Mapping> mapping;
  bool dry_run = false;
  bool replace = false;
  bool allow_future = false;  // accept transactions and splits dated after today
  // Transactions: a row whose ref is booked with other content is booked as
  // a correction (void of the old row + the new row) instead of refused.
  bool book_corrections = false;
  // Transactions from an OFX statement: the keel account it is for.
  std::optional<std::string> account;
  // Corporate actions: no account holds the securities (ActionRequest::market_only).
  bool market_only = false;
  // Called every so many rows with (rows so far, bytes read, file size).
  std::function<void(std::uint64_t, std::uint64_t, std::uint64_t)> progress;
  // When set, the import reads these bytes and the file only names them (in
  // messages and the import log); the demo's built-in scenario.
  std::optional<std::string_view> content;
};

// The CSV an import reads: the file, or options.content under the file's
// name; delimited as the mapping says, hashed for the import log.
CsvReader open_import_csv(const std::filesystem::path& file, const Mapping& mapping,
                          const ImportOptions& options);

struct ImportSummary {
  MarketKind what = MarketKind::prices;
  std::string file;
  std::string sha256;
  std::uint64_t rows = 0;
  std::uint64_t added = 0;
  std::uint64_t unchanged = 0;
  std::uint64_t replaced = 0;
  bool dry_run = false;
  std::optional<std::int64_t> run_id;                // set when recorded
  std::optional<store::ImportRun> same_file_before;  // an earlier run of identical bytes
  std::vector<std::string> notes;  // "FILE:LINE: ...", e.g. a row naming a former symbol
};

ImportSummary import_market(store::Database& db, MarketKind what, const std::filesystem::path& file,
                            const ImportOptions& options);

enum class ExportFormat { csv, json };
// Writes to `out` without committing it; returns the number of rows written.
std::uint64_t export_market(store::Database& db, MarketKind what, ExportFormat format,
                            OutputFile& out);

}  // namespace keel::io
