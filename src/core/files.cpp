#include "core/files.h"

#include <fcntl.h>
#include <fmt/format.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <vector>

#include "core/error.h"
#include "core/text.h"

namespace keel {
namespace fs = std::filesystem;

namespace {

constexpr const char* kCompanions[] = {"", "-wal", "-shm", "-journal"};

std::vector<fs::path>& protected_paths() {
  static std::vector<fs::path> paths;
  return paths;
}

// weakly_canonical leaves a relative path relative when none of it exists.
fs::path resolved(const fs::path& p, std::error_code& ec) {
  const fs::path absolute = fs::absolute(p, ec);
  return ec ? p : fs::weakly_canonical(absolute, ec);
}

bool same_file(const fs::path& a, const fs::path& b) {
  std::error_code ea, eb;
  const fs::path ca = resolved(a, ea);
  const fs::path cb = resolved(b, eb);
  if (!ea && !eb && ca == cb) return true;
  // A hard link, or a path that reaches the file through a bind mount.
  struct stat sa {
  }, sb{};
  return ::stat(a.c_str(), &sa) == 0 && ::stat(b.c_str(), &sb) == 0 && sa.st_dev == sb.st_dev &&
         sa.st_ino == sb.st_ino;
}

// `p` with every symbolic link of its last component followed, so that the
// file a link names is the one replaced (rename would replace the link).
fs::path follow_links(const fs::path& p, int& err) {
  fs::path current = p;
  for (int hops = 0; hops < 40; ++hops) {
    struct stat st {};
    if (::lstat(current.c_str(), &st) != 0 || !S_ISLNK(st.st_mode)) return current;
    std::error_code ec;
    const fs::path link = fs::read_symlink(current, ec);
    if (ec) {
      err = ec.value();
      return current;
    }
    current = link.is_absolute() ? link : current.parent_path() / link;
  }
  err = ELOOP;
  return current;
}

fs::path folder_of(const fs::path& p) {
  return p.has_parent_path() ? p.parent_path() : fs::path(".");
}

void remove_with_companions(const fs::path& p) noexcept {
  try {
    std::error_code ec;
    for (const char* suffix : kCompanions) fs::remove(p.string() + suffix, ec);
  } catch (...) {
    // Only an allocation can fail here; a leftover temporary file is harmless.
  }
}

}  // namespace

std::string os_error_text(int err) {
  switch (err) {
    case ENOSPC:
      return "disk full (no space left on the device)";
    case EDQUOT:
      return "disk quota exceeded";
    case EFBIG:
      return "file too large (the size limit for files of this process was reached)";
    case EROFS:
      return "read-only file system";
    case EACCES:
    case EPERM:
      return "permission denied";
    default: {
      std::string text = std::strerror(err);
      if (!text.empty() && text[0] >= 'A' && text[0] <= 'Z')
        text[0] = static_cast<char>(text[0] + 32);
      return text;
    }
  }
}

void protect_from_output(const fs::path& ledger) {
  std::error_code ec;
  fs::path p = fs::absolute(ledger, ec).lexically_normal();
  if (ec) p = ledger;
  auto& paths = protected_paths();
  for (const auto& known : paths)
    if (known == p) return;
  paths.push_back(std::move(p));
}

std::optional<ProtectedFile> protected_file_at(const fs::path& target) {
  for (const auto& ledger : protected_paths()) {
    std::error_code ec;
    const fs::path real = resolved(ledger, ec);
    for (const char* suffix : kCompanions) {
      // SQLite keeps the companions beside the file a link names; check both.
      if (same_file(target, ledger.string() + suffix) ||
          (!ec && same_file(target, real.string() + suffix)))
        return ProtectedFile{ledger, suffix};
    }
  }
  return std::nullopt;
}

std::error_code rename_no_replace(const fs::path& from, const fs::path& to) {
  if (::renameat2(AT_FDCWD, from.c_str(), AT_FDCWD, to.c_str(), RENAME_NOREPLACE) == 0) return {};
  if (errno != EINVAL && errno != ENOSYS && errno != ENOTSUP)
    return {errno, std::generic_category()};
  // A file system without RENAME_NOREPLACE: link() refuses an existing name too.
  if (::link(from.c_str(), to.c_str()) != 0) return {errno, std::generic_category()};
  ::unlink(from.c_str());
  return {};
}

std::error_code sync_folder(const fs::path& folder) {
  const int fd = ::open(folder.empty() ? "." : folder.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return {errno, std::generic_category()};
  int err = 0;
  if (::fsync(fd) != 0 && errno != EINVAL && errno != EROFS && errno != ENOTSUP) err = errno;
  ::close(fd);
  return err ? std::error_code(err, std::generic_category()) : std::error_code();
}

OutputFile::OutputFile(const fs::path& target, OutputOptions options)
    : target_(target), options_(std::move(options)) {
  if (target_ == "-") {
    mode_ = Mode::standard_output;
    fd_ = STDOUT_FILENO;
    if (options_.binary && ::isatty(STDOUT_FILENO))
      throw InputError(fmt::format(
          "{} -: standard output is a terminal; send this binary file to a file or a pipe",
          options_.option));
    return;
  }
  int err = 0;
  dest_ = follow_links(target_, err);
  if (err) fail(err, "follow the link");
  for (const auto& p : {target_, dest_})
    if (const auto hit = protected_file_at(p)) {
      const std::string ledger = printable(hit->ledger.string());
      throw InputError(fmt::format(
          "{} {}: is {}; choose another file", options_.option, printable(target_.string()),
          hit->suffix.empty()
              ? "the ledger " + ledger
              : fmt::format("{}{}, a file SQLite keeps beside the ledger", ledger, hit->suffix)));
    }
  struct stat st {};
  if (::stat(dest_.c_str(), &st) == 0) {
    existed_ = true;
    if (S_ISDIR(st.st_mode))
      throw InputError(fmt::format("{} {}: is a folder, not a file", options_.option,
                                   printable(target_.string())));
    if (!S_ISREG(st.st_mode)) {
      mode_ = Mode::in_place;
      fd_ = ::open(dest_.c_str(), O_WRONLY | O_CLOEXEC | O_NOCTTY);
      if (fd_ < 0) fail(errno, "open");
      return;
    }
    if (!options_.replace)
      throw InputError(fmt::format("{} {}: already exists; choose a new file", options_.option,
                                   printable(target_.string())));
    // A rename would replace a file its owner made read-only; writing in
    // place would not, nor would the shell's '>'.
    if (::faccessat(AT_FDCWD, dest_.c_str(), W_OK, AT_EACCESS) != 0) fail(errno);
    mode_bits_ = st.st_mode & 07777;
  } else if (errno != ENOENT) {
    fail(errno, "open");
  }
  const fs::path folder = folder_of(dest_);
  std::error_code ec;
  if (!fs::is_directory(folder, ec))
    throw InputError(fmt::format("{} {}: the folder '{}' does not exist", options_.option,
                                 printable(target_.string()), printable(folder.string())));
  const std::string name = dest_.filename().string();
  std::string pattern =
      (folder / ("." + (name.size() > 200 ? std::string("output") : name) + ".keel-XXXXXX"))
          .string();
  fd_ = ::mkostemp(pattern.data(), O_CLOEXEC);
  if (fd_ < 0) fail(errno, "create a temporary file in its folder");
  temp_ = pattern;
  if (existed_) {
    // Keep the replaced file's owner where allowed (only root may give a file
    // away); its permission bits always.
    if (::fchown(fd_, st.st_uid, st.st_gid) != 0) {
    }
  }
  if (::fchmod(fd_, mode_bits_) != 0) fail(errno, "set the permissions of");
}

OutputFile::~OutputFile() {
  if (fd_ >= 0 && mode_ != Mode::standard_output) ::close(fd_);
  if (!committed_ && !temp_.empty()) remove_with_companions(temp_);
  if (mode_ != Mode::replace_file && !writer_file_.empty()) remove_with_companions(writer_file_);
}

void OutputFile::fail(int err, std::string_view doing) {
  if (mode_ == Mode::standard_output)
    throw InputError(fmt::format("cannot write to standard output: {}", os_error_text(err)));
  const bool kept = existed_ && mode_ == Mode::replace_file && !committed_;
  throw InputError(fmt::format("{} {}: cannot {}: {}{}", options_.option,
                               printable(target_.string()), doing, os_error_text(err),
                               kept ? "; the existing file is unchanged" : ""));
}

namespace {
void (*before_standard_output)() = nullptr;
}  // namespace

bool is_standard_input(const fs::path& path) {
  return path == "-";
}

const std::string& standard_input_text() {
  static std::optional<std::string> text;
  if (text) return *text;
  std::string all;
  std::vector<char> buf(1 << 16);
  for (;;) {
    const ssize_t got = ::read(STDIN_FILENO, buf.data(), buf.size());
    if (got == 0) break;
    if (got < 0) {
      if (errno == EINTR) continue;
      throw InputError(fmt::format("cannot read standard input: {}", os_error_text(errno)));
    }
    all.append(buf.data(), static_cast<std::size_t>(got));
  }
  text = std::move(all);
  return *text;
}

std::string input_name(const fs::path& path) {
  return is_standard_input(path) ? std::string("standard input") : path.string();
}

void set_before_standard_output(void (*hook)()) {
  before_standard_output = hook;
}

void OutputFile::flush_stdio() {
  if (mode_ != Mode::standard_output || flushed_stdout_) return;
  if (before_standard_output) before_standard_output();
  // Text printed before through stdio goes first.
  if (std::fflush(stdout) != 0) fail(errno);
  flushed_stdout_ = true;
}

void OutputFile::write(std::string_view bytes) {
  flush_stdio();
  while (!bytes.empty()) {
    const ssize_t n = ::write(fd_, bytes.data(), bytes.size());
    if (n < 0) {
      if (errno == EINTR) continue;
      fail(errno);
    }
    bytes.remove_prefix(static_cast<std::size_t>(n));
  }
}

const fs::path& OutputFile::path_for_writer() {
  if (!writer_file_.empty()) return writer_file_;
  if (mode_ == Mode::replace_file) {
    const int fd = fd_;
    fd_ = -1;
    if (::close(fd) != 0) fail(errno);
    writer_file_ = temp_;
    return writer_file_;
  }
  std::string pattern = (fs::temp_directory_path() / "keel-output-XXXXXX").string();
  const int fd = ::mkostemp(pattern.data(), O_CLOEXEC);
  if (fd < 0) fail(errno, "create a temporary file");
  ::close(fd);
  writer_file_ = pattern;
  return writer_file_;
}

void OutputFile::copy_writer_file_out() {
  const int in = ::open(writer_file_.c_str(), O_RDONLY | O_CLOEXEC);
  if (in < 0) fail(errno, "read back");
  std::vector<char> buffer(1 << 20);
  for (;;) {
    const ssize_t n = ::read(in, buffer.data(), buffer.size());
    if (n < 0 && errno == EINTR) continue;
    if (n < 0) {
      const int err = errno;
      ::close(in);
      fail(err, "read back");
    }
    if (n == 0) break;
    try {
      write(std::string_view(buffer.data(), static_cast<std::size_t>(n)));
    } catch (...) {
      ::close(in);
      throw;
    }
  }
  ::close(in);
}

void OutputFile::commit_file() {
  if (writer_file_.empty()) {
    if (::fsync(fd_) != 0) fail(errno);
    const int fd = fd_;
    fd_ = -1;
    if (::close(fd) != 0) fail(errno);
  } else {
    // The writer may have replaced the file: sync whatever now has the name.
    const int fd = ::open(temp_.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) fail(errno);
    const bool ok = ::fchmod(fd, mode_bits_) == 0 && ::fsync(fd) == 0;
    const int err = errno;
    ::close(fd);
    if (!ok) fail(err);
  }
  if (options_.replace) {
    if (::rename(temp_.c_str(), dest_.c_str()) != 0) fail(errno);
  } else if (const auto ec = rename_no_replace(temp_, dest_)) {
    if (ec == std::errc::file_exists)
      throw InputError(fmt::format("{} {}: already exists; choose a new file", options_.option,
                                   printable(target_.string())));
    fail(ec.value());
  }
  committed_ = true;
  if (const auto ec = sync_folder(folder_of(dest_)))
    throw InputError(fmt::format("{} {}: written, but its folder could not be synced: {}",
                                 options_.option, printable(target_.string()),
                                 os_error_text(ec.value())));
}

void OutputFile::commit() {
  if (committed_) return;
  if (mode_ == Mode::replace_file) {
    commit_file();
    return;
  }
  if (!writer_file_.empty()) copy_writer_file_out();
  flush_stdio();
  // A pipe or a terminal cannot be synced; a redirected file can, and a full
  // disk may only show here.
  if (::fsync(fd_) != 0 && errno != EINVAL && errno != EROFS && errno != ENOTSUP) fail(errno);
  if (mode_ == Mode::in_place) {
    const int fd = fd_;
    fd_ = -1;
    if (::close(fd) != 0) fail(errno);
  }
  committed_ = true;
}

}  // namespace keel
