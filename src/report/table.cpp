#include "report/table.h"

#include <fmt/format.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>

#include "core/text.h"

namespace keel::report {

bool use_colour(std::FILE* stream) {
  const char* no_colour = std::getenv("NO_COLOR");
  if (no_colour && *no_colour) return false;
  return ::isatty(::fileno(stream)) == 1;
}

std::size_t display_width(const std::string& text) {
  std::size_t width = 0;
  for (unsigned char c : text)
    if ((c & 0xC0) != 0x80) ++width;
  return width;
}

void Table::add_row(std::vector<std::string> cells) {
  cells.resize(columns_.size());
  for (auto& cell : cells) cell = printable(cell);
  rows_.push_back(std::move(cells));
}

void Table::add_rule() {
  rows_.emplace_back();
}

std::string Table::render(const Style& style) const {
  std::vector<std::size_t> widths(columns_.size());
  for (std::size_t c = 0; c < columns_.size(); ++c) widths[c] = display_width(columns_[c].heading);
  for (const auto& row : rows_)
    for (std::size_t c = 0; c < row.size(); ++c)
      widths[c] = std::max(widths[c], display_width(row[c]));

  auto cell = [&](const std::string& text, std::size_t c) {
    const std::size_t pad = widths[c] - std::min(widths[c], display_width(text));
    return columns_[c].align == Align::right ? std::string(pad, ' ') + text
                                             : text + std::string(pad, ' ');
  };
  auto line = [&](const std::vector<std::string>& cells) {
    std::string out;
    for (std::size_t c = 0; c < columns_.size(); ++c) {
      if (c) out += "  ";
      out += cell(cells[c], c);
    }
    while (!out.empty() && out.back() == ' ') out.pop_back();
    return out + "\n";
  };
  std::size_t total = 0;
  for (std::size_t c = 0; c < widths.size(); ++c) total += widths[c] + (c ? 2 : 0);
  const std::string rule(total, '-');

  std::vector<std::string> headings;
  for (const auto& col : columns_) headings.push_back(col.heading);
  std::string out = style.colour ? "\x1b[1m" + line(headings) : line(headings);
  if (style.colour) out.insert(out.size() - 1, "\x1b[0m");
  out += rule + "\n";
  for (const auto& row : rows_) out += row.empty() ? rule + "\n" : line(row);
  return out;
}

}  // namespace keel::report
