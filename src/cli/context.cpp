#include "cli/context.h"

#include <fmt/format.h>

#include <cstdlib>

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

store::Database Context::open_ledger(bool create) const {
  store::OpenOptions options;
  options.create = create;
  options.allow_unsafe_permissions = allow_unsafe_permissions;
  return store::Database::open(ledger_path(), options);
}

bool Context::colour() const {
  return report::use_colour(stdout);
}

void out(const std::string& text) {
  std::fwrite(text.data(), 1, text.size(), stdout);
}

}  // namespace keel::cli
