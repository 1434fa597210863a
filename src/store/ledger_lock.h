// LedgerLock: keel's own lock on a ledger file, so that a restore never
// replaces a file another keel command has open.
//
// Contract
//  - Every ledger connection holds a shared lock (flock) on the file from
//    before SQLite opens it until after SQLite has closed it; restore holds it
//    exclusive for the whole swap. acquire() waits up to `timeout_ms`, then
//    throws LedgerError (shared: "ledger is busy", exclusive: the caller's
//    `busy_message`).
//  - The lock is on the file at `path` when acquire() returns: a file replaced
//    while waiting is let go and the new one locked, so no keel command ever
//    opens a file a restore has moved aside.
//  - One descriptor per file and process, shared by every lock on it and
//    closed only when the last is released: closing any descriptor of a file
//    would drop the POSIX locks SQLite holds on it in this process.
//  - flock and SQLite's POSIX locks do not interact (Linux, local file
//    systems). Where flock is not supported, or the file cannot be opened for
//    reading, the lock is empty and SQLite's own locking is all there is.
//  - Programs other than keel do not take it; restore guards against them with
//    SQLite's locks (store/maintenance.h).
#pragma once

#include <sys/types.h>

#include <filesystem>
#include <string>

namespace keel::store {

class LedgerLock {
 public:
  enum class Kind { shared, exclusive };

  LedgerLock() = default;
  static LedgerLock acquire(const std::filesystem::path& path, Kind kind, int timeout_ms,
                            const std::string& busy_message = {});
  ~LedgerLock();
  LedgerLock(LedgerLock&& other) noexcept;
  LedgerLock& operator=(LedgerLock&& other) noexcept;
  LedgerLock(const LedgerLock&) = delete;
  LedgerLock& operator=(const LedgerLock&) = delete;

  bool held() const { return held_; }

 private:
  void release() noexcept;

  dev_t dev_ = 0;
  ino_t ino_ = 0;
  Kind kind_ = Kind::shared;
  bool held_ = false;
};

}  // namespace keel::store
