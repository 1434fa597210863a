// Table: aligned plain-text tables for people at a terminal.
//
// Columns are left- or right-aligned; cells are printed through printable()
// so hostile text cannot drive the terminal. Colour (bold headings, a dim
// rule) is used only when Style::colour is true; callers decide that with
// use_colour(), which says no when the stream is not a terminal or NO_COLOR
// is set.
#pragma once

#include <cstdio>
#include <string>
#include <vector>

namespace keel::report {

enum class Align { left, right };

struct Style {
  bool colour = false;
};

bool use_colour(std::FILE* stream);

class Table {
 public:
  struct Column {
    std::string heading;
    Align align = Align::left;
  };
  explicit Table(std::vector<Column> columns) : columns_(std::move(columns)) {}
  void add_row(std::vector<std::string> cells);
  void add_rule();  // a separator line, e.g. before a total
  std::string render(const Style& style = {}) const;
  bool empty() const { return rows_.empty(); }

 private:
  std::vector<Column> columns_;
  std::vector<std::vector<std::string>> rows_;  // an empty row is a rule
};

// Display width of UTF-8 text in terminal columns (code points, not bytes).
std::size_t display_width(const std::string& text);

}  // namespace keel::report
