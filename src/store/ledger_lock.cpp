#include "store/ledger_lock.h"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <map>
#include <thread>
#include <utility>

#include "core/error.h"

namespace keel::store {
namespace {

struct Entry {
  int fd = -1;
  int shared = 0;  // shared holders in this process
  bool exclusive = false;
};

std::map<std::pair<dev_t, ino_t>, Entry>& entries() {
  static std::map<std::pair<dev_t, ino_t>, Entry> map;
  return map;
}

bool same_file_at(const std::filesystem::path& path, dev_t dev, ino_t ino) {
  struct stat st {};
  return ::stat(path.c_str(), &st) == 0 && st.st_dev == dev && st.st_ino == ino;
}

// Drops one hold; closes the descriptor once nothing in this process uses it.
void drop(std::pair<dev_t, ino_t> key, LedgerLock::Kind kind) noexcept {
  auto& map = entries();
  const auto it = map.find(key);
  if (it == map.end()) return;
  Entry& e = it->second;
  if (kind == LedgerLock::Kind::exclusive)
    e.exclusive = false;
  else if (e.shared > 0)
    --e.shared;
  if (e.shared > 0 || e.exclusive) return;
  ::flock(e.fd, LOCK_UN);
  ::close(e.fd);
  map.erase(it);
}

}  // namespace

LedgerLock LedgerLock::acquire(const std::filesystem::path& path, Kind kind, int timeout_ms,
                               const std::string& busy_message) {
  using Clock = std::chrono::steady_clock;
  const auto deadline = Clock::now() + std::chrono::milliseconds(timeout_ms);
  auto pause = std::chrono::milliseconds(1);
  auto& map = entries();
  for (;;) {
    struct stat st {};
    if (::stat(path.c_str(), &st) != 0) return {};
    const auto key = std::make_pair(st.st_dev, st.st_ino);
    auto it = map.find(key);
    if (it == map.end()) {
      const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC | O_NOCTTY);
      if (fd < 0) return {};
      struct stat opened {};
      if (::fstat(fd, &opened) != 0 || opened.st_dev != st.st_dev || opened.st_ino != st.st_ino) {
        // Replaced between stat and open; this process has no connection to
        // the file just opened, so closing it drops nobody's locks.
        ::close(fd);
        continue;
      }
      it = map.emplace(key, Entry{fd}).first;
    }
    Entry& e = it->second;
    bool got = false;
    if (kind == Kind::shared && e.shared > 0) {
      got = true;  // this process holds it shared already
    } else if (kind == Kind::shared && e.exclusive) {
      got = true;  // a restore of this process reading its own ledger
    } else if (kind == Kind::exclusive && e.shared > 0) {
      throw LedgerError(busy_message.empty() ? "ledger is busy" : busy_message);
    } else if (::flock(e.fd, (kind == Kind::shared ? LOCK_SH : LOCK_EX) | LOCK_NB) == 0) {
      got = true;
    } else if (errno != EWOULDBLOCK && errno != EINTR) {
      // No flock here (some network file systems): SQLite's locks stand alone.
      if (e.shared == 0 && !e.exclusive) {
        ::close(e.fd);
        map.erase(it);
      }
      return {};
    }
    if (got) {
      LedgerLock lock;
      lock.dev_ = st.st_dev;
      lock.ino_ = st.st_ino;
      lock.kind_ = kind;
      lock.held_ = true;
      if (kind == Kind::shared)
        ++e.shared;
      else
        e.exclusive = true;
      // Waiting, we may have locked a file a restore then moved aside.
      if (same_file_at(path, st.st_dev, st.st_ino)) return lock;
      continue;  // `lock` lets go of it
    }
    if (e.shared == 0 && !e.exclusive) {
      ::close(e.fd);
      map.erase(it);
    }
    if (Clock::now() >= deadline)
      throw LedgerError(busy_message.empty()
                            ? "ledger is busy: another keel is using it; try again in a moment"
                            : busy_message);
    std::this_thread::sleep_for(pause);
    pause = std::min(pause * 2, std::chrono::milliseconds(20));
  }
}

LedgerLock::~LedgerLock() {
  release();
}

LedgerLock::LedgerLock(LedgerLock&& other) noexcept
    : dev_(other.dev_), ino_(other.ino_), kind_(other.kind_), held_(other.held_) {
  other.held_ = false;
}

LedgerLock& LedgerLock::operator=(LedgerLock&& other) noexcept {
  if (this != &other) {
    release();
    dev_ = other.dev_;
    ino_ = other.ino_;
    kind_ = other.kind_;
    held_ = other.held_;
    other.held_ = false;
  }
  return *this;
}

void LedgerLock::release() noexcept {
  if (!held_) return;
  held_ = false;
  drop({dev_, ino_}, kind_);
}

}  // namespace keel::store
