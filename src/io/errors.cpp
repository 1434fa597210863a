#include "io/errors.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/text.h"

namespace keel::io {

void ErrorList::add(std::uint64_t line, std::string_view column, std::string reason) {
  if (full()) return;
  entries_.push_back({line, std::string(column), std::move(reason), std::nullopt});
}

void ErrorList::sort_by_line() {
  std::stable_sort(entries_.begin(), entries_.end(),
                   [](const LocatedError& a, const LocatedError& b) { return a.line < b.line; });
}

void ErrorList::add(std::uint64_t line, std::string_view column, std::string_view value,
                    std::string reason) {
  if (full()) return;
  entries_.push_back({line, std::string(column), std::move(reason), std::string(value)});
}

std::string ErrorList::format(const LocatedError& e) const {
  std::string out = printable(file_);
  if (e.line > 0) out += fmt::format(":{}", e.line);
  out += ": ";
  if (!e.column.empty() && e.value)
    out += fmt::format("column '{}' = {}: ", printable(e.column), printable(*e.value));
  else if (!e.column.empty())
    out += fmt::format("column '{}': ", printable(e.column));
  out += printable(e.reason);
  return out;
}

std::vector<std::string> ErrorList::lines() const {
  std::vector<std::string> out;
  out.reserve(entries_.size());
  for (const auto& e : entries_) out.push_back(format(e));
  return out;
}

void ErrorList::raise(std::string_view outcome) const {
  const std::string count =
      full() ? fmt::format("stopped after {} errors", entries_.size())
             : fmt::format("{} error{}", entries_.size(), entries_.size() == 1 ? "" : "s");
  throw ImportRefused(fmt::format("{}: {}; {}", printable(file_), count, outcome), lines());
}

}  // namespace keel::io
