#include "cli/context.h"

#include <fmt/format.h>

#include <cerrno>
#include <cstdlib>

#include "core/error.h"
#include "core/files.h"
#include "report/table.h"

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

void out(const std::string& text) {
  if (std::fwrite(text.data(), 1, text.size(), stdout) != text.size())
    throw InputError(fmt::format("cannot write to standard output: {}", os_error_text(errno)));
}

void finish_output() {
  if (std::fflush(stdout) != 0 || std::ferror(stdout))
    throw InputError(fmt::format("cannot write to standard output: {}", os_error_text(errno)));
}

}  // namespace keel::cli
