#include "report/table.h"

#include <fmt/format.h>
#include <fmt/ranges.h>
#include <sys/ioctl.h>
#include <unicode/uchar.h>
#include <unicode/utf8.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>

#include "core/text.h"
#include "report/wrap.h"

namespace keel::report {

bool use_colour(std::FILE* stream) {
  const char* no_colour = std::getenv("NO_COLOR");
  if (no_colour && *no_colour) return false;
  return ::isatty(::fileno(stream)) == 1;
}

std::size_t terminal_width(std::FILE* stream) {
  const int fd = ::fileno(stream);
  if (::isatty(fd) != 1) return 0;
  winsize size{};
  if (::ioctl(fd, TIOCGWINSZ, &size) == 0 && size.ws_col > 0) return size.ws_col;
  // A terminal that does not say its size: the width every terminal has.
  return 80;
}

Style terminal_style(std::FILE* stream) {
  return {use_colour(stream), terminal_width(stream)};
}

namespace {

// Character widths come from ICU's Unicode properties (already linked for
// identifiers) rather than a table of our own: the East Asian Width property
// and the general categories follow each Unicode version as Debian updates
// ICU, where a copied table would silently go stale.
// Printable ASCII, nearly every character of a report, takes one column
// (ICU's properties say so: none is a mark or ignorable, none is wide); it is
// counted without asking ICU.
bool printable_ascii(UChar32 c) {
  return c >= 0x20 && c < 0x7f;
}

std::size_t code_point_width(UChar32 c) {
  if (printable_ascii(c)) return 1;
  if (c < 0) return 1;  // an ill-formed byte (printable() has escaped it already)
  const auto type = u_charType(c);
  if (type == U_NON_SPACING_MARK || type == U_ENCLOSING_MARK || type == U_FORMAT_CHAR ||
      u_hasBinaryProperty(c, UCHAR_DEFAULT_IGNORABLE_CODE_POINT))
    return 0;
  const auto east_asian = u_getIntPropertyValue(c, UCHAR_EAST_ASIAN_WIDTH);
  return east_asian == U_EA_WIDE || east_asian == U_EA_FULLWIDTH ? 2 : 1;
}

template <typename Visit>
void each_code_point(const std::string& text, Visit&& visit) {
  const auto* bytes = reinterpret_cast<const uint8_t*>(text.data());
  const auto length = static_cast<int32_t>(text.size());
  for (int32_t i = 0; i < length;) {
    const int32_t start = i;
    UChar32 c = 0;
    U8_NEXT(bytes, i, length, c);
    if (!visit(c, static_cast<std::size_t>(start), static_cast<std::size_t>(i))) return;
  }
}

}  // namespace

std::size_t display_width(const std::string& text) {
  if (std::all_of(text.begin(), text.end(),
                  [](char c) { return printable_ascii(static_cast<unsigned char>(c)); }))
    return text.size();
  std::size_t width = 0;
  each_code_point(text, [&](UChar32 c, std::size_t, std::size_t) {
    width += code_point_width(c);
    return true;
  });
  return width;
}

std::string shorten_to_width(const std::string& text, std::size_t width) {
  if (display_width(text) <= width) return text;
  if (width == 0) return "";
  // Keep what fits in width - 1 columns (zero-width marks stay with their
  // base character), then the ellipsis.
  std::size_t used = 0, end = 0;
  each_code_point(text, [&](UChar32 c, std::size_t, std::size_t next) {
    const std::size_t w = code_point_width(c);
    if (used + w > width - 1) return false;
    used += w;
    end = next;
    return true;
  });
  return text.substr(0, end) + "…";
}

namespace {

// Columns a line takes, colour sequences (ESC [ ... m) not counted.
std::size_t visible_width(const std::string& line) {
  if (line.find('\x1b') == std::string::npos) return display_width(line);
  std::string plain;
  for (std::size_t i = 0; i < line.size(); ++i) {
    if (line[i] == '\x1b' && i + 1 < line.size() && line[i + 1] == '[') {
      i += 2;
      while (i < line.size() && !(line[i] >= '@' && line[i] <= '~')) ++i;
      continue;
    }
    plain += line[i];
  }
  return display_width(plain);
}

std::string wrap_line(const std::string& line, std::size_t width) {
  const std::size_t indent_size = line.find_first_not_of(' ');
  if (indent_size == std::string::npos || visible_width(line) <= width) return line;
  const std::string indent(std::min(indent_size, width / 2), ' ');
  std::string out, current = line.substr(0, indent_size);
  bool has_word = false;
  for (std::size_t at = indent_size; at < line.size();) {
    std::size_t end = line.find(' ', at);
    if (end == std::string::npos) end = line.size();
    const std::string word = line.substr(at, end - at);
    const std::string candidate = has_word ? current + " " + word : current + word;
    if (has_word && visible_width(candidate) > width) {
      out += current + "\n";
      current = indent + word;
    } else {
      current = candidate;
    }
    has_word = has_word || !word.empty();
    at = end + 1;
  }
  return out + current;
}

}  // namespace

std::string wrap_to_width(const std::string& text, std::size_t width) {
  if (width == 0) return text;
  std::string out;
  for (std::size_t at = 0; at < text.size();) {
    std::size_t end = text.find('\n', at);
    const bool newline = end != std::string::npos;
    if (!newline) end = text.size();
    out += wrap_line(text.substr(at, end - at), width);
    if (newline) out += '\n';
    at = end + 1;
  }
  return out;
}

void Table::add_row(std::vector<std::string> cells) {
  cells.resize(columns_.size());
  for (auto& cell : cells) cell = printable(cell);
  rows_.push_back(std::move(cells));
}

void Table::add_rule() {
  rows_.emplace_back();
}

namespace {

std::size_t line_width(const std::vector<std::size_t>& widths, const std::vector<bool>& shown) {
  std::size_t total = 0, count = 0;
  for (std::size_t c = 0; c < widths.size(); ++c)
    if (shown[c]) total += widths[c] + (count++ ? 2 : 0);
  return total;
}

// Narrows the shortening columns, widest first, until the line fits in
// `limit` or none can give more (a column keeps at least its heading).
void shorten_columns(std::vector<std::size_t>& widths, const std::vector<std::size_t>& least,
                     const std::vector<Table::Column>& columns, const std::vector<bool>& shown,
                     std::size_t limit) {
  for (std::size_t over = line_width(widths, shown); over > limit; --over) {
    std::size_t pick = widths.size();
    for (std::size_t c = 0; c < widths.size(); ++c)
      if (shown[c] && columns[c].shortens && widths[c] > least[c] &&
          (pick == widths.size() || widths[c] > widths[pick]))
        pick = c;
    if (pick == widths.size()) return;
    --widths[pick];
  }
}

}  // namespace

std::string Table::render(const Style& style) const {
  const std::size_t n = columns_.size();
  std::vector<std::size_t> natural(n), least(n);
  for (std::size_t c = 0; c < n; ++c)
    natural[c] = std::max<std::size_t>(display_width(columns_[c].heading), 1);
  for (const auto& row : rows_)
    for (std::size_t c = 0; c < row.size(); ++c)
      natural[c] = std::max(natural[c], display_width(row[c]));
  // A shortened column keeps its heading and at least 10 columns, so short
  // names and labels such as "short-term" stay whole.
  for (std::size_t c = 0; c < n; ++c)
    least[c] = std::max(display_width(columns_[c].heading), std::min<std::size_t>(natural[c], 10));

  std::vector<bool> shown(n, true);
  std::vector<std::size_t> widths = natural;
  std::vector<std::string> dropped;
  if (style.width > 0) {
    shorten_columns(widths, least, columns_, shown, style.width);
    // Still too wide: leave out the least important column and try again.
    while (line_width(widths, shown) > style.width) {
      std::size_t pick = n;
      for (std::size_t c = n; c-- > 0;)
        if (shown[c] && columns_[c].drop_rank > 0 &&
            (pick == n || columns_[c].drop_rank > columns_[pick].drop_rank))
          pick = c;
      if (pick == n) break;
      shown[pick] = false;
      dropped.push_back(columns_[pick].heading);
      widths = natural;
      shorten_columns(widths, least, columns_, shown, style.width);
    }
    // Last: shorter names still, down to their headings (the contract's
    // "never below their heading"; the 10-column floor holds until then).
    std::vector<std::size_t> heading_only(n);
    for (std::size_t c = 0; c < n; ++c)
      heading_only[c] = std::max<std::size_t>(display_width(columns_[c].heading), 1);
    shorten_columns(widths, heading_only, columns_, shown, style.width);
  }

  auto cell = [&](const std::string& full, std::size_t c) {
    const std::string text = columns_[c].shortens ? shorten_to_width(full, widths[c]) : full;
    const std::size_t pad = widths[c] - std::min(widths[c], display_width(text));
    return columns_[c].align == Align::right ? std::string(pad, ' ') + text
                                             : text + std::string(pad, ' ');
  };
  auto line = [&](const std::vector<std::string>& cells) {
    std::string out;
    bool first = true;
    for (std::size_t c = 0; c < n; ++c) {
      if (!shown[c]) continue;
      if (!first) out += "  ";
      first = false;
      out += cell(cells[c], c);
    }
    while (!out.empty() && out.back() == ' ') out.pop_back();
    return out + "\n";
  };
  const std::string rule(line_width(widths, shown), '-');

  std::vector<std::string> headings;
  for (const auto& col : columns_) headings.push_back(col.heading);
  std::string out = style.colour ? "\x1b[1m" + line(headings) : line(headings);
  if (style.colour) out.insert(out.size() - 1, "\x1b[0m");
  out += rule + "\n";
  for (const auto& row : rows_) out += row.empty() ? rule + "\n" : line(row);
  if (!dropped.empty()) {
    std::vector<std::string> in_order;  // in the table's order
    for (const auto& col : columns_)
      if (std::find(dropped.begin(), dropped.end(), col.heading) != dropped.end())
        in_order.push_back(col.heading);
    out += fmt::format("(left out to fit {} columns: {}; pipe the output for every column)\n",
                       style.width, fmt::join(in_order, ", "));
  }
  return out;
}

}  // namespace keel::report
