// restore_backup(): replaces a ledger file with a checked backup.
//
// The backup is read-only throughout. It must be a keel ledger no newer than
// this program, pass SQLite's checks, and — copied next to the ledger and
// migrated to the current schema — pass verify(). Only then is the current
// ledger (if any) moved aside to "<ledger>.replaced-<UTC time>" and the copy
// renamed into place, so at every moment one complete ledger sits at the
// path. Throws LedgerError (the backup is unusable) or InputError; on any
// failure the current ledger is untouched.
#pragma once

#include <filesystem>
#include <optional>

namespace keel::ledger {

struct RestoreResult {
  std::optional<std::filesystem::path> replaced_kept_at;
  std::size_t transactions = 0;
};

RestoreResult restore_backup(const std::filesystem::path& ledger,
                             const std::filesystem::path& backup);

}  // namespace keel::ledger
