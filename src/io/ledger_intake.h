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
//  - Exactly once: a row whose (account, ref) is already booked with the
//    same content (date, kind, symbol, quantity, price, amount, fee,
//    to_account, lots, acquired; not the note), or, without ref, whose content matches a
//    booked row of that account, is skipped and counted as already booked.
//    The same key twice inside one file is an error.
//  - Corrections: a row whose ref is booked with other content is refused,
//    listing every differing field (old -> new), unless
//    ImportOptions::book_corrections: then the booked row is voided and the
//    new one booked, both recorded against the import run (import_txn,
//    correction), history kept. A ref whose rows were all voided by hand
//    stays booked (skipped).
//  - Errors about a figure name the file's own column and the cell as
//    written ("FILE:13: column 'Net Amount' = -12.52: ..."), never an option.
//  - The currency and rate columns are read and checked: a row in another
//    currency than its account's is refused (keel does not convert yet), and
//    a rate must be 1 for a row in the account's currency.
//  - OFX investment statements (io/ofx.h) go through the same booking, with
//    the OFX transaction ids as refs.
//  - Exports write live transactions (voided rows and voids left out) in
//    posting order; a transfer between own accounts is one transfer_out row
//    with to_account, which imports back as the same linked pair.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <utility>
#include <vector>

#include "io/errors.h"
#include "io/market_intake.h"
#include "ledger/posting.h"
#include "store/database.h"

namespace keel::io {

// One row of a file, read and ready to book.
struct IntakeRow {
  ledger::PostRequest request;
  std::uint64_t line = 0;
  // request field ("amount", "to-account", ...) -> (the file's column, the cell as written)
  std::map<std::string, std::pair<std::string, std::string>> sources;
};

struct LedgerImportSummary {
  std::string file;
  std::string sha256;
  std::uint64_t rows = 0;
  std::uint64_t added = 0;           // rows posted (a transfer pair counts once)
  std::uint64_t already_booked = 0;  // rows skipped as seen before
  std::uint64_t corrected = 0;       // booked rows replaced by a corrected one
  // Rows passed over by the mapping's actions.skip, per action as written.
  std::vector<std::pair<std::string, std::uint64_t>> skipped;
  std::vector<IntakeRow> preview;  // the first rows as they will be booked
  // "FILE:LINE: ..." for rows worth a word, e.g. a security named by a former symbol.
  std::vector<std::string> notes;
  bool dry_run = false;
  std::optional<std::int64_t> run_id;
};

constexpr std::size_t kPreviewRows = 10;

// Books rows read from `file` (all or nothing, exactly once, corrections as
// above); `sum` has rows, sha256 and file set. Throws ImportRefused.
void book_rows(store::Database& db, const std::filesystem::path& file, std::vector<IntakeRow> rows,
               const ImportOptions& options, ErrorList& errors, LedgerImportSummary& sum);

LedgerImportSummary import_transactions(store::Database& db, const std::filesystem::path& file,
                                        const ImportOptions& options);
// The transactions of an OFX investment statement (options.account names
// the keel account); import_transactions() sends OFX files here.
LedgerImportSummary import_ofx_transactions(store::Database& db, const std::filesystem::path& file,
                                            const ImportOptions& options);
LedgerImportSummary import_accounts(store::Database& db, const std::filesystem::path& file,
                                    const ImportOptions& options);
// Corporate actions in keel's layout (docs/import-formats.md): date, symbol,
// action, and the figures its kind takes; each row is checked as 'keel record
// <action>' checks it, then the whole ledger is replayed once. All or nothing.
LedgerImportSummary import_actions(store::Database& db, const std::filesystem::path& file,
                                   const ImportOptions& options);

// Write to `out` without committing it; return the number of rows written.
std::uint64_t export_transactions(store::Database& db, ExportFormat format, OutputFile& out);
std::uint64_t export_accounts(store::Database& db, ExportFormat format, OutputFile& out);
// The corporate actions in force (voided ones and voids left out), by date, in
// the layout `import actions` reads; securities by their current symbol, and a
// merger's cost share as recorded (stated or derived on its day).
std::uint64_t export_actions(store::Database& db, ExportFormat format, OutputFile& out);

}  // namespace keel::io
