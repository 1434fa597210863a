// Table: aligned plain-text tables for people at a terminal.
//
// Columns are left- or right-aligned; cells are printed through printable()
// so hostile text cannot drive the terminal. Colour (bold headings, a dim
// rule) is used only when Style::colour is true; callers decide that with
// use_colour(), which says no when the stream is not a terminal or NO_COLOR
// is set.
//
// Width is counted in terminal columns (display_width): East Asian wide and
// fullwidth characters take 2, combining marks and other zero-width
// characters 0. When Style::width is set (terminal_style() sets it to the
// terminal's width when writing to one), render() makes the table fit:
// first it shortens the columns marked `shortens` (names, notes) with an
// ellipsis, never below their heading; numbers and other columns are never
// cut. If that is not enough it leaves out columns with a `drop_rank`,
// highest rank first, and ends with a line naming them. Width 0 (piped
// output, files) keeps every column at full width.
#pragma once

#include <cstdio>
#include <string>
#include <vector>

namespace keel::report {

enum class Align { left, right };

struct Style {
  bool colour = false;
  std::size_t width = 0;  // terminal columns to fit; 0: no limit
};

bool use_colour(std::FILE* stream);
// The width of the terminal `stream` writes to, or 0 when it is not a
// terminal (a pipe or a file keeps full-width lines).
std::size_t terminal_width(std::FILE* stream);
// Colour and width for a table written to `stream`.
Style terminal_style(std::FILE* stream);

class Table {
 public:
  struct Column {
    std::string heading;
    Align align = Align::left;
    bool shortens = false;  // free text: may be shortened with an ellipsis to fit
    int drop_rank = 0;      // 0: always shown; else left out (highest first) when nothing else fits
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

// Display width of UTF-8 text in terminal columns: East Asian Width W and F
// count 2, nonspacing and enclosing marks, format characters and other
// default-ignorable code points 0, everything else 1.
std::size_t display_width(const std::string& text);
// `text` cut to at most `width` columns, ending in "…" when it was cut.
std::string shorten_to_width(const std::string& text, std::size_t width);

}  // namespace keel::report
