// Writing files safely: the one way keel writes every file it makes
// (exports, statements, back-test curves, backups), and the guard that keeps
// any of them from landing on the ledger.
//
// OutputFile contract
//  - A regular target is written to a new temporary file in the target's own
//    folder (".NAME.keel-XXXXXX", created with mkstemp). write() checks every
//    write; commit() fsyncs and closes the file (both checked), renames it over
//    the target and fsyncs the folder. Until commit() returns, the target is
//    exactly as it was; the destructor removes the temporary file (and any
//    SQLite companion of it) and never throws.
//  - A new file is private to its owner (0600): it holds the same figures as
//    the ledger. Replacing an existing file keeps that file's permission bits;
//    a file this process may not write is refused, not replaced.
//    A symbolic link is followed: the file it names is replaced, the link stays.
//  - "-" is standard output. A device, FIFO or socket (/dev/null, /dev/stdout)
//    is written in place. Neither can be replaced atomically; every write is
//    still checked. With `binary`, a terminal on standard output is refused.
//  - With replace = false an existing target is refused, also one that appears
//    while writing (the final rename never replaces a file).
//  - A target that is a protected path (protect_from_output) or one of its
//    SQLite companions (-wal, -shm, -journal), reached by any name (relative,
//    through a symbolic link, a hard link), is refused before anything is
//    created.
//  - Every error is an InputError "<option> <target>: <reason>", the system's
//    reason in words ("disk full" for ENOSPC); standard output's errors say
//    "cannot write to standard output: <reason>".
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <system_error>

namespace keel {

// Reading input files: "-" names standard input.
//  - is_standard_input(path): the path is "-".
//  - standard_input_text(): all of standard input, read the first time it is
//    asked for and kept, so that looking at a file's first bytes (is it OFX?)
//    and then reading it sees the same text. A failed read is an InputError
//    "cannot read standard input: <reason>".
//  - input_name(path): how messages name it ("standard input" for "-").
bool is_standard_input(const std::filesystem::path& path);
const std::string& standard_input_text();
std::string input_name(const std::filesystem::path& path);

// A function OutputFile calls once before it first writes to standard
// output, so that text a caller holds back (the command line's pager) goes
// out first. Null: none.
void set_before_standard_output(void (*hook)());

// The reason for a failed system call, in words: "disk full" (ENOSPC),
// "disk quota exceeded", "permission denied", ... (strerror otherwise).
std::string os_error_text(int err);

// Registers a ledger file: no OutputFile may write to it or to its -wal, -shm
// or -journal file. Registering the same path twice is harmless.
void protect_from_output(const std::filesystem::path& ledger);
// Which protected file `target` would write to, if any: the ledger as
// registered and the companion's suffix ("" for the ledger itself).
struct ProtectedFile {
  std::filesystem::path ledger;
  std::string suffix;
};
std::optional<ProtectedFile> protected_file_at(const std::filesystem::path& target);

// rename(2) that never replaces: an existing `to` gives errc::file_exists and
// nothing moves. Uses renameat2(RENAME_NOREPLACE), or link()+unlink() where the
// file system lacks it.
std::error_code rename_no_replace(const std::filesystem::path& from,
                                  const std::filesystem::path& to);
// fsync of a folder, so that renames in it survive a crash. File systems that
// cannot sync a folder are not an error.
std::error_code sync_folder(const std::filesystem::path& folder);

struct OutputOptions {
  std::string option;   // names the target in messages: "--out", "--html", "FILE"
  bool replace = true;  // false: refuse an existing target
  bool binary = false;  // refuse "-" when standard output is a terminal
};

class OutputFile {
 public:
  OutputFile(const std::filesystem::path& target, OutputOptions options);
  ~OutputFile();
  OutputFile(const OutputFile&) = delete;
  OutputFile& operator=(const OutputFile&) = delete;

  bool to_stdout() const { return mode_ == Mode::standard_output; }
  // The target as the user wrote it, and the option that named it.
  const std::filesystem::path& target() const { return target_; }
  const std::string& option() const { return options_.option; }

  void write(std::string_view bytes);
  // For writers that insist on a file name (libxlsxwriter, Chromium, SQLite):
  // a file they may fill or replace; commit() takes what it then holds. Use
  // either this or write(), not both.
  const std::filesystem::path& path_for_writer();
  void commit();

 private:
  enum class Mode { replace_file, in_place, standard_output };
  [[noreturn]] void fail(int err, std::string_view doing = "write");
  void flush_stdio();
  void copy_writer_file_out();
  void commit_file();

  std::filesystem::path target_;
  std::filesystem::path dest_;  // target_ with symbolic links followed
  OutputOptions options_;
  Mode mode_ = Mode::replace_file;
  int fd_ = -1;
  std::filesystem::path temp_;         // replace_file: beside dest_
  std::filesystem::path writer_file_;  // set once path_for_writer() was called
  bool existed_ = false;
  unsigned mode_bits_ = 0600;
  bool flushed_stdout_ = false;
  bool committed_ = false;
};

}  // namespace keel
