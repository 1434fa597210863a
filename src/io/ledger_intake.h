// Importing and exporting the ledger itself: accounts and transactions, in
// keel's canonical CSV layouts (or a mapped layout), see docs/import-formats.md.
//
// Contract
//  - import_transactions() reads the whole file, then posts every new row in
//    one write transaction with a single replay of the ledger (ledger::post
//    rules: shapes, names, no overselling, no negative cash where not
//    allowed). Any bad row refuses the import: ImportRefused lists every
//    problem found (up to 50) as FILE:LINE[: column 'x']: reason, and the
//    ledger is left exactly as it was.
//  - Exactly once: a row whose (account, ref) is already booked, or, without
//    ref, whose content (date, kind, symbol, quantity, price, amount, fee)
//    matches a booked row of that account, is skipped and counted as already
//    booked. The same key twice inside one file is an error.
//  - Exports write live transactions (voided rows and voids left out) in
//    posting order; a transfer between own accounts is one transfer_out row
//    with to_account, which imports back as the same linked pair.
#pragma once

#include <cstdint>
#include <filesystem>

#include "io/market_intake.h"
#include "store/database.h"

namespace keel::io {

struct LedgerImportSummary {
  std::string file;
  std::string sha256;
  std::uint64_t rows = 0;
  std::uint64_t added = 0;           // rows posted (a transfer pair counts once)
  std::uint64_t already_booked = 0;  // rows skipped as seen before
  bool dry_run = false;
  std::optional<std::int64_t> run_id;
};

LedgerImportSummary import_transactions(store::Database& db, const std::filesystem::path& file,
                                        const ImportOptions& options);
LedgerImportSummary import_accounts(store::Database& db, const std::filesystem::path& file,
                                    const ImportOptions& options);

// Write to `out` without committing it; return the number of rows written.
std::uint64_t export_transactions(store::Database& db, ExportFormat format, OutputFile& out);
std::uint64_t export_accounts(store::Database& db, ExportFormat format, OutputFile& out);

}  // namespace keel::io
