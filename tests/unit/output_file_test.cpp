// OutputFile: every file keel writes goes to a temporary file beside it, is
// checked, and is renamed into place; the ledger is never a target.
#include <doctest/doctest.h>
#include <sys/resource.h>
#include <sys/stat.h>
#include <unistd.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <string>

#include "core/error.h"
#include "core/files.h"
#include "test_files.h"

using namespace keel;
namespace fs = std::filesystem;

namespace {

std::string bytes_of(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  return {std::istreambuf_iterator<char>(in), {}};
}

// Files in `dir` whose name says they are an OutputFile's temporary file.
int leftovers(const fs::path& dir) {
  int n = 0;
  for (const auto& e : fs::directory_iterator(dir))
    if (e.path().filename().string().find(".keel-") != std::string::npos) ++n;
  return n;
}

unsigned mode_of(const fs::path& p) {
  struct stat st {};
  REQUIRE(::stat(p.c_str(), &st) == 0);
  return st.st_mode & 0777;
}

// Lowers this process's file size limit for one test; SIGXFSZ is ignored so
// that a write past it fails with EFBIG, as a full disk fails with ENOSPC.
class FileSizeLimit {
 public:
  explicit FileSizeLimit(rlim_t bytes) {
    ::getrlimit(RLIMIT_FSIZE, &saved_);
    old_handler_ = std::signal(SIGXFSZ, SIG_IGN);
    rlimit lower = saved_;
    lower.rlim_cur = bytes;
    ::setrlimit(RLIMIT_FSIZE, &lower);
  }
  ~FileSizeLimit() {
    ::setrlimit(RLIMIT_FSIZE, &saved_);
    std::signal(SIGXFSZ, old_handler_);
  }

 private:
  rlimit saved_{};
  void (*old_handler_)(int) = nullptr;
};

}  // namespace

TEST_CASE("files: a committed output replaces the target and leaves no temporary file") {
  test::TempDir dir;
  const auto target = dir.write("report.csv", "old\n");
  {
    OutputFile out(target, {"--out"});
    out.write("new,");
    out.write("content\n");
    CHECK(bytes_of(target) == "old\n");  // nothing shows before commit
    CHECK(leftovers(dir.path()) == 1);
    out.commit();
  }
  CHECK(bytes_of(target) == "new,content\n");
  CHECK(leftovers(dir.path()) == 0);
}

TEST_CASE("files: an output dropped before commit leaves the previous file and no temporary file") {
  test::TempDir dir;
  const auto target = dir.write("report.csv", "old\n");
  {
    OutputFile out(target, {"--out"});
    out.write("half a fi");
  }
  CHECK(bytes_of(target) == "old\n");
  CHECK(leftovers(dir.path()) == 0);
}

TEST_CASE(
    "files: a write error leaves the previous file untouched and removes the temporary file") {
  test::TempDir dir;
  const std::string previous(10000, 'p');
  const auto target = dir.write("prices.csv", previous);
  {
    OutputFile out(target, {"--out"});
    const FileSizeLimit limit(4096);
    CHECK_THROWS_WITH_AS(
        out.write(std::string(8192, 'n')),
        ("--out " + target.string() +
         ": cannot write: file too large (the size limit for files of this process was "
         "reached); the existing file is unchanged")
            .c_str(),
        InputError);
  }
  CHECK(bytes_of(target) == previous);
  CHECK(leftovers(dir.path()) == 0);
}

TEST_CASE("files: a full device is reported as disk full") {
  if (!fs::exists("/dev/full")) return;
  OutputFile out("/dev/full", {"--out"});
  const auto write_all = [&] {
    out.write(std::string(1 << 16, 'x'));
    out.commit();
  };
  CHECK_THROWS_WITH_AS(write_all(),
                       "--out /dev/full: cannot write: disk full (no space left on the device)",
                       InputError);
}

TEST_CASE("files: the ledger is refused by name, relative path, symbolic link and hard link") {
  test::TempDir dir;
  const auto ledger = dir.write("books.db", "ledger bytes");
  protect_from_output(ledger);
  fs::create_symlink(ledger, dir.path() / "link.csv");
  fs::create_hard_link(ledger, dir.path() / "hard.csv");
  const fs::path relative = fs::relative(ledger, fs::current_path());
  for (const fs::path& target : {ledger, relative, dir.path() / "link.csv", dir.path() / "hard.csv",
                                 dir.path() / "sub" / ".." / "books.db"}) {
    CAPTURE(target);
    CHECK_THROWS_WITH_AS(OutputFile(target, {"--html"}),
                         ("--html " + target.string() + ": is the ledger " + ledger.string() +
                          "; choose another file")
                             .c_str(),
                         InputError);
  }
  CHECK(bytes_of(ledger) == "ledger bytes");
  CHECK(leftovers(dir.path()) == 0);
}

TEST_CASE("files: the ledger's companion files are refused, also before they exist") {
  test::TempDir dir;
  const auto ledger = dir.write("books.db", "ledger bytes");
  protect_from_output(ledger);
  fs::create_symlink(ledger.string() + "-shm", dir.path() / "dangling.csv");
  for (const char* suffix : {"-wal", "-shm", "-journal"}) {
    CAPTURE(suffix);
    CHECK_THROWS_WITH_AS(OutputFile(ledger.string() + suffix, {"--out"}),
                         ("--out " + ledger.string() + suffix + ": is " + ledger.string() + suffix +
                          ", a file SQLite keeps beside the ledger; choose another file")
                             .c_str(),
                         InputError);
  }
  CHECK_THROWS_AS(OutputFile(dir.path() / "dangling.csv", {"--out"}), InputError);
  {
    // A bare name in the current folder, not there yet: weakly_canonical alone
    // would leave it relative and miss it.
    const fs::path before = fs::current_path();
    fs::current_path(dir.path());
    CHECK_THROWS_AS(OutputFile("books.db-journal", {"--out"}), InputError);
    fs::current_path(before);
  }
  CHECK_FALSE(fs::exists(ledger.string() + "-shm"));
  CHECK_FALSE(fs::exists(ledger.string() + "-journal"));
}

TEST_CASE("files: a symbolic link is followed; the link stays and its file is replaced") {
  test::TempDir dir;
  const auto real = dir.write("real.html", "old");
  fs::create_symlink("real.html", dir.path() / "link.html");
  {
    OutputFile out(dir.path() / "link.html", {"--html"});
    out.write("new");
    out.commit();
  }
  CHECK(fs::is_symlink(dir.path() / "link.html"));
  CHECK(bytes_of(real) == "new");
}

TEST_CASE("files: a new file is private to its owner; a replaced file keeps its permissions") {
  test::TempDir dir;
  {
    OutputFile out(dir.path() / "new.csv", {"--out"});
    out.write("x");
    out.commit();
  }
  CHECK(mode_of(dir.path() / "new.csv") == 0600);
  const auto shared = dir.write("shared.csv", "old");
  ::chmod(shared.c_str(), 0644);
  {
    OutputFile out(shared, {"--out"});
    out.write("new");
    out.commit();
  }
  CHECK(mode_of(shared) == 0644);
}

TEST_CASE("files: without replace, a file that appears while writing is not overwritten") {
  test::TempDir dir;
  const auto existing = dir.write("old.db", "kept");
  CHECK_THROWS_WITH_AS(
      OutputFile(existing, {"FILE", false}),
      ("FILE " + existing.string() + ": already exists; choose a new file").c_str(), InputError);
  const fs::path target = dir.path() / "race.db";
  OutputFile out(target, {"FILE", false});
  out.write("mine");
  dir.write("race.db", "theirs");
  CHECK_THROWS_WITH_AS(out.commit(),
                       ("FILE " + target.string() + ": already exists; choose a new file").c_str(),
                       InputError);
  CHECK(bytes_of(target) == "theirs");
  CHECK(bytes_of(existing) == "kept");
}

TEST_CASE("files: a folder, or a missing folder, is refused before anything is written") {
  test::TempDir dir;
  CHECK_THROWS_WITH_AS(OutputFile(dir.path(), {"--curve"}),
                       ("--curve " + dir.path().string() + ": is a folder, not a file").c_str(),
                       InputError);
  const fs::path missing = dir.path() / "nowhere" / "curve.csv";
  CHECK_THROWS_WITH_AS(OutputFile(missing, {"--curve"}),
                       ("--curve " + missing.string() + ": the folder '" +
                        (dir.path() / "nowhere").string() + "' does not exist")
                           .c_str(),
                       InputError);
}

TEST_CASE("files: what another writer leaves at the writer's path is what commit puts in place") {
  test::TempDir dir;
  const auto target = dir.write("book.xlsx", "old");
  ::chmod(target.c_str(), 0640);
  {
    OutputFile out(target, {"--xlsx"});
    const fs::path scratch = out.path_for_writer();
    CHECK(scratch.parent_path() == dir.path());
    // A writer that replaces the file rather than filling it.
    fs::remove(scratch);
    std::ofstream(scratch, std::ios::binary) << "workbook";
    ::chmod(scratch.c_str(), 0666);
    out.commit();
  }
  CHECK(bytes_of(target) == "workbook");
  CHECK(mode_of(target) == 0640);  // the replaced file's bits, not the writer's
  CHECK(leftovers(dir.path()) == 0);
}

TEST_CASE("files: rename_no_replace moves a file but never over another") {
  test::TempDir dir;
  const auto a = dir.write("a", "A");
  const auto b = dir.write("b", "B");
  CHECK(rename_no_replace(a, b) == std::errc::file_exists);
  CHECK(bytes_of(a) == "A");
  CHECK(bytes_of(b) == "B");
  CHECK_FALSE(rename_no_replace(a, dir.path() / "c"));
  CHECK_FALSE(fs::exists(a));
  CHECK(bytes_of(dir.path() / "c") == "A");
}

TEST_CASE("files: system errors read as words") {
  CHECK(os_error_text(ENOSPC) == "disk full (no space left on the device)");
  CHECK(os_error_text(EDQUOT) == "disk quota exceeded");
  CHECK(os_error_text(EACCES) == "permission denied");
  CHECK(os_error_text(ENOENT) == "no such file or directory");
}

TEST_CASE("files: a file its owner made read-only is refused, not replaced") {
  if (::geteuid() == 0) return;  // root may write any file; nothing to refuse
  test::TempDir dir;
  const auto kept = dir.write("kept.csv", "old");
  ::chmod(kept.c_str(), 0444);
  CHECK_THROWS_WITH_AS(OutputFile(kept, {"--out"}),
                       ("--out " + kept.string() +
                        ": cannot write: permission denied; the existing file is unchanged")
                           .c_str(),
                       InputError);
  CHECK(bytes_of(kept) == "old");
  CHECK(leftovers(dir.path()) == 0);
}
