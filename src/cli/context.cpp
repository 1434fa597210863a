#include "cli/context.h"

#include <fmt/format.h>
#include <sys/ioctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <csignal>
#include <cstdio>
#include <cstdlib>

#include "core/error.h"
#include "core/files.h"
#include "report/table.h"
#include "report/wrap.h"

namespace keel::cli {

std::filesystem::path Context::ledger_path() const {
  if (!db_path.empty()) return db_path;
  if (const char* xdg = std::getenv("XDG_DATA_HOME"); xdg && *xdg)
    return std::filesystem::path(xdg) / "keel" / "keel.db";
  const char* home = std::getenv("HOME");
  return std::filesystem::path(home && *home ? home : ".") / ".local" / "share" / "keel" /
         "keel.db";
}

store::Database Context::open_ledger(store::Access access) const {
  store::OpenOptions options;
  options.access = access;
  options.allow_unsafe_permissions = allow_unsafe_permissions;
  return store::Database::open(ledger_path(), options);
}

bool Context::colour() const {
  return report::use_colour(stdout);
}

report::Style Context::style() const {
  return report::terminal_style(stdout);
}

namespace {

struct Held {
  bool holding = false;
  std::string text;
};
Held& held() {
  static Held h;
  return h;
}

void write_stdout(const std::string& text) {
  if (std::fwrite(text.data(), 1, text.size(), stdout) != text.size())
    throw InputError(fmt::format("cannot write to standard output: {}", os_error_text(errno)));
}

// Lines the text takes on the terminal, long lines wrapping.
std::size_t screen_lines(const std::string& text, std::size_t columns) {
  std::size_t lines = 0;
  for (std::size_t at = 0; at < text.size();) {
    std::size_t end = text.find('\n', at);
    if (end == std::string::npos) end = text.size();
    const std::size_t width = report::display_width(text.substr(at, end - at));
    lines += width == 0 ? 1 : (width + columns - 1) / columns;
    at = end + 1;
  }
  return lines;
}

std::size_t terminal_rows() {
  winsize size{};
  if (::ioctl(STDOUT_FILENO, TIOCGWINSZ, &size) == 0 && size.ws_row > 0) return size.ws_row;
  return 24;
}

std::string pager_command() {
  const char* pager = std::getenv("PAGER");
  return pager ? std::string(pager) : std::string("less -FRX");
}

// Shows `text` through the pager; false when none could run (the caller then
// prints it). A reader who quits early closes the pipe: that is no error.
bool page(const std::string& text) {
  const std::string command = pager_command();
  std::fflush(stdout);
  const auto old_pipe = std::signal(SIGPIPE, SIG_IGN);
  // The command is the user's own $PAGER, run through the shell as every
  // tool that pages does, so that "less -R" or a script with options works.
  FILE* pipe = ::popen(command.c_str(), "w");
  if (!pipe) {
    std::signal(SIGPIPE, old_pipe);
    return false;
  }
  std::fwrite(text.data(), 1, text.size(), pipe);
  const int status = ::pclose(pipe);
  std::signal(SIGPIPE, old_pipe);
  // 127: the shell found no such program; nothing was shown.
  return !(WIFEXITED(status) && WEXITSTATUS(status) == 127);
}

}  // namespace

void hold_output_for_pager() {
  if (::isatty(STDOUT_FILENO) != 1) return;
  const std::string command = pager_command();
  if (command.empty() || command == "cat") return;
  held().holding = true;
  set_before_standard_output(+[] { release_held_output(); });
}

void release_held_output() noexcept {
  Held& h = held();
  h.holding = false;
  if (!h.text.empty()) std::fwrite(h.text.data(), 1, h.text.size(), stdout);
  h.text.clear();
}

// At a terminal, prose lines wider than it break at spaces, so that no
// number is split by the terminal's own wrapping (tables already fit).
static std::string fitted(const std::string& text) {
  return report::wrap_to_width(text, report::terminal_width(stdout));
}

void out(const std::string& text) {
  if (held().holding) {
    held().text += text;
    return;
  }
  write_stdout(fitted(text));
}

void finish_output() {
  Held& h = held();
  if (h.holding) {
    h.holding = false;
    std::string text = fitted(h.text);
    h.text.clear();
    const std::size_t columns = std::max<std::size_t>(report::terminal_width(stdout), 1);
    if (text.empty() || screen_lines(text, columns) < terminal_rows() || !page(text))
      write_stdout(text);
  }
  if (std::fflush(stdout) != 0 || std::ferror(stdout))
    throw InputError(fmt::format("cannot write to standard output: {}", os_error_text(errno)));
}

}  // namespace keel::cli
