// PDF: the statement's HTML printed by a headless Chromium with a fresh,
// throw-away profile and every background network feature switched off.
#include <fcntl.h>
#include <fmt/format.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cctype>
#include <chrono>
#include <cstdlib>
#include <thread>

#include "core/error.h"
#include "core/text.h"
#include "report/statement_forms.h"

namespace keel::report {
namespace {

constexpr int kTimeoutSeconds = 180;

std::string file_url(const std::filesystem::path& path) {
  static const char* hex = "0123456789ABCDEF";
  std::string url = "file://";
  for (const unsigned char c : std::filesystem::absolute(path).string()) {
    if (std::isalnum(c) || c == '/' || c == '-' || c == '_' || c == '.' || c == '~') {
      url += static_cast<char>(c);
    } else {
      url += '%';
      url += hex[c >> 4];
      url += hex[c & 15];
    }
  }
  return url;
}

// Removes a temporary folder when it goes out of scope.
struct TempDir {
  std::filesystem::path path;
  ~TempDir() {
    std::error_code ec;
    if (!path.empty()) std::filesystem::remove_all(path, ec);
  }
};

}  // namespace

std::optional<std::filesystem::path> find_chromium() {
  const char* path_env = std::getenv("PATH");
  const std::string paths = path_env ? path_env : "/usr/bin:/bin";
  for (const char* name : {"chromium", "chromium-browser"}) {
    std::size_t start = 0;
    while (start <= paths.size()) {
      std::size_t end = paths.find(':', start);
      if (end == std::string::npos) end = paths.size();
      const std::filesystem::path dir = paths.substr(start, end - start);
      if (!dir.empty()) {
        const auto candidate = dir / name;
        if (::access(candidate.c_str(), X_OK) == 0) return candidate;
      }
      start = end + 1;
    }
  }
  return std::nullopt;
}

void print_pdf(const std::filesystem::path& html, OutputFile& pdf) {
  const auto chromium = find_chromium();
  if (!chromium)
    throw InputError(fmt::format(
        "{}: no Chromium found on PATH to print the PDF; install it (Debian: apt-get install "
        "chromium) or write --html and print that",
        pdf.option()));
  std::error_code ec;
  std::string profile_template =
      (std::filesystem::temp_directory_path() / "keel-chromium-XXXXXX").string();
  if (!::mkdtemp(profile_template.data()))
    throw InputError(
        fmt::format("{}: cannot make a temporary folder for Chromium's profile", pdf.option()));
  TempDir profile{profile_template};
  // Chromium fills the OutputFile's empty temporary file; it is put in place
  // only when Chromium succeeded.
  const auto temp_pdf = std::filesystem::absolute(pdf.path_for_writer());

  std::vector<std::string> args{chromium->string(),
                                "--headless",
                                "--no-sandbox",
                                "--disable-gpu",
                                "--disable-background-networking",
                                "--disable-component-update",
                                "--disable-sync",
                                "--no-first-run",
                                "--no-pdf-header-footer",
                                "--user-data-dir=" + profile.path.string(),
                                "--print-to-pdf=" + temp_pdf.string(),
                                file_url(html)};
  std::vector<char*> argv;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  const std::string log_path = (profile.path / "chromium.log").string();

  const pid_t pid = ::fork();
  if (pid < 0)
    throw InputError(fmt::format("{}: cannot start Chromium: fork failed", pdf.option()));
  if (pid == 0) {
    const int null_in = ::open("/dev/null", O_RDONLY);
    const int log = ::open(log_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
    if (null_in >= 0) ::dup2(null_in, 0);
    if (log >= 0) {
      ::dup2(log, 1);
      ::dup2(log, 2);
    }
    ::setpgid(0, 0);
    ::execv(argv[0], argv.data());
    ::_exit(127);
  }
  int status = 0;
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(kTimeoutSeconds);
  for (;;) {
    const pid_t done = ::waitpid(pid, &status, WNOHANG);
    if (done == pid) break;
    if (std::chrono::steady_clock::now() > deadline) {
      ::kill(-pid, SIGKILL);
      ::waitpid(pid, &status, 0);
      throw InputError(fmt::format("{}: Chromium did not finish printing within {} seconds",
                                   pdf.option(), kTimeoutSeconds));
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  const bool ok = WIFEXITED(status) && WEXITSTATUS(status) == 0 &&
                  std::filesystem::exists(temp_pdf, ec) &&
                  std::filesystem::file_size(temp_pdf, ec) > 0;
  if (!ok)
    throw InputError(fmt::format("{}: Chromium ({}) could not print the PDF (exit status {})",
                                 pdf.option(), chromium->string(),
                                 WIFEXITED(status) ? WEXITSTATUS(status) : -1));
  pdf.commit();
}

}  // namespace keel::report
