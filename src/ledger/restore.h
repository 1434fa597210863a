// restore_backup(): replaces a ledger file with a checked backup.
//
// The backup is read-only throughout. It must be a keel ledger no newer than
// this program, pass SQLite's checks, and — copied next to the ledger as
// "<ledger>.restoring-<pid>" and migrated to the current schema — pass
// verify(). Only then is the copy swapped in by store::replace_ledger_file():
// refused while another program has the ledger open, the current ledger (if
// any) kept aside under a new name ("<ledger>.replaced-<UTC time>", "-2" ...
// if taken; never over another file), and at every moment one complete
// ledger at the path. Staging files left by a restore that was killed (their
// process is gone) are removed first and listed in the result. Throws
// LedgerError (the backup is unusable, the ledger is in use) or InputError;
// on any failure the current ledger is untouched.
#pragma once

#include <filesystem>
#include <optional>
#include <vector>

namespace keel::ledger {

struct RestoreResult {
  std::optional<std::filesystem::path> replaced_kept_at;
  std::size_t transactions = 0;
  std::vector<std::filesystem::path> stale_removed;  // left by interrupted restores
};

RestoreResult restore_backup(const std::filesystem::path& ledger,
                             const std::filesystem::path& backup);

}  // namespace keel::ledger
