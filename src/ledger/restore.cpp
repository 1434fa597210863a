#include "ledger/restore.h"

#include <fmt/format.h>
#include <signal.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <charconv>

#include "core/error.h"
#include "ledger/verify.h"
#include "store/database.h"
#include "store/maintenance.h"

namespace keel::ledger {
namespace fs = std::filesystem;

namespace {

constexpr const char* kStaging = ".restoring-";
constexpr const char* kSuffixes[] = {"", "-wal", "-shm", "-journal"};

void remove_quietly(const fs::path& p) {
  std::error_code ec;
  for (const char* suffix : kSuffixes) fs::remove(p.string() + suffix, ec);
}

// "<ledger>.restoring-<pid>[-wal|-shm|-journal]" whose process is gone: what a
// killed restore leaves. A live process (or one of another user) keeps its files.
std::vector<fs::path> remove_stale_staging(const fs::path& ledger) {
  std::vector<fs::path> removed;
  const fs::path folder = ledger.has_parent_path() ? ledger.parent_path() : fs::path(".");
  const std::string prefix = ledger.filename().string() + kStaging;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator(folder, ec)) {
    const std::string name = entry.path().filename().string();
    if (!name.starts_with(prefix)) continue;
    const char* first = name.data() + prefix.size();
    const char* last = name.data() + name.size();
    long pid = 0;
    const auto [end, err] = std::from_chars(first, last, pid);
    if (err != std::errc() || pid <= 0) continue;
    const std::string_view rest(end, static_cast<std::size_t>(last - end));
    if (std::none_of(std::begin(kSuffixes), std::end(kSuffixes),
                     [&](const char* s) { return rest == s; }))
      continue;
    if (pid == ::getpid() || ::kill(static_cast<pid_t>(pid), 0) == 0 || errno == EPERM) continue;
    std::error_code removed_ec;
    if (fs::remove(entry.path(), removed_ec))
      removed.push_back(ledger.has_parent_path() ? entry.path() : fs::path(name));
  }
  std::sort(removed.begin(), removed.end());
  return removed;
}

}  // namespace

RestoreResult restore_backup(const fs::path& ledger, const fs::path& backup) {
  const auto facts = store::inspect_backup(backup);
  if (!facts.problems.empty())
    throw LedgerError(fmt::format("{} is damaged ({}); nothing was restored", backup.string(),
                                  facts.problems.front()));
  RestoreResult result;
  result.stale_removed = remove_stale_staging(ledger);
  const fs::path staging =
      ledger.string() + fmt::format("{}{}", kStaging, static_cast<long>(::getpid()));
  remove_quietly(staging);
  try {
    store::copy_ledger_file(backup, staging);
    {
      auto copy = store::Database::open(staging);  // brings an older schema up to date
      const auto report = verify(copy);
      if (!report.ok())
        throw LedgerError(fmt::format("{} does not verify ({}); nothing was restored",
                                      backup.string(), report.problems.front()));
      result.transactions = report.transactions;
    }
    result.replaced_kept_at = store::replace_ledger_file(ledger, staging);
  } catch (...) {
    remove_quietly(staging);
    throw;
  }
  remove_quietly(staging);  // companions the staging copy may have left
  return result;
}

}  // namespace keel::ledger
