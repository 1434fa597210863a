// The forms of a year-end statement (report/statement.h): terminal text,
// self-contained HTML, JSON, CSV files, an XLSX workbook, and PDF through a
// headless Chromium.
//
// Contract
//  - Every form is drawn from statement_sections(), one table per section, so
//    the forms cannot disagree. Money cells hold the exact Decimal: the
//    terminal and HTML show two places, CSV and JSON the exact text, XLSX a
//    number with a two-place format. Percent cells hold fractions.
//  - Each total a section can state as arithmetic on its own cells (a sum
//    of the rows above, of those of one class, or one row less another) is
//    described in `formulas`, so the XLSX keeps a formula whose cached value
//    is keel's exact figure.
//  - Text fits 100 columns for ordinary names and amounts. HTML needs no
//    network (inline CSS and SVG, no scripts, no links out); every piece of
//    user text is escaped. HTML, PDF and XLSX are laid out for `paper`; the
//    PDF's pages carry a running title and "page N of M".
//  - The XLSX has an autofilter over each table's header and detail rows, and
//    native charts of the growth (a sheet of its own) and the monthly
//    returns.
//  - The writers fill an OutputFile (core/files.h) and commit it, so a failure
//    leaves no half-written file and never touches the ledger; they throw
//    InputError naming the option, the path and the reason. print_pdf() throws
//    InputError when Chromium is missing (saying how to install it) or fails.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/files.h"
#include "report/cells.h"
#include "report/paper.h"
#include "report/statement.h"
#include "report/table.h"

namespace keel::report {

// Headings and alignment, as for a terminal table.
using SectionColumn = Table::Column;

// A total made from cells of its own column, rows counted from the
// section's first row: sum of rows first..last; sum_if of those whose cell in
// `if_column` reads `if_text`; difference: row `first` less row `last`.
struct Formula {
  enum class Kind { sum, sum_if, difference };
  Kind kind = Kind::sum;
  std::size_t row = 0, column = 0;  // the total's cell
  std::size_t first = 0, last = 0;
  std::size_t if_column = 0;
  std::string if_text;

  static Formula sum(std::size_t row, std::size_t column, std::size_t first, std::size_t last) {
    return {Kind::sum, row, column, first, last, 0, {}};
  }
  static Formula sum_if(std::size_t row, std::size_t column, std::size_t first, std::size_t last,
                        std::size_t if_column, std::string if_text) {
    return {Kind::sum_if, row, column, first, last, if_column, std::move(if_text)};
  }
  static Formula difference(std::size_t row, std::size_t column, std::size_t minuend,
                            std::size_t subtrahend) {
    return {Kind::difference, row, column, minuend, subtrahend, 0, {}};
  }
};

struct Section {
  std::string key;    // file and sheet name: "summary", "performance", ...
  std::string title;  // heading shown to people
  std::vector<SectionColumn> columns;
  std::vector<std::vector<Cell>> rows;
  std::vector<std::size_t> emphasised;  // rows that are totals (a rule before them)
  std::vector<std::string> notes;       // sentences printed under the table
  std::vector<Formula> formulas;        // how totals follow from the rows, where they do
};

std::vector<Section> statement_sections(const Statement& s);

std::string statement_text(const Statement& s, const Style& style);
std::string statement_html(const Statement& s, Paper paper);
std::string statement_json(const Statement& s);  // ends with a newline

// One CSV file per section, DIR/<key>.csv; DIR is created if missing (its
// parent must exist). `option` names the folder in messages ("--csv").
void write_statement_csv(const Statement& s, const std::filesystem::path& dir,
                         const std::string& option);
// The workbook through libxlsxwriter, which is opened on the first XLSX of a
// run (core/shared_library.h); throws InputError "<out's option>: writing
// XLSX needs the shared library ..." when it cannot be loaded.
void write_statement_xlsx(const Statement& s, OutputFile& out, Paper paper);
// Opens libxlsxwriter now, so that a command can refuse before it works:
// throws the same InputError, naming `option` ("--xlsx").
void load_xlsx_writer(std::string_view option);

// The first of chromium, chromium-browser on PATH; nullopt when there is none.
std::optional<std::filesystem::path> find_chromium();
// Prints an HTML file to PDF with a headless Chromium and a fresh profile.
void print_pdf(const std::filesystem::path& html, OutputFile& pdf);

}  // namespace keel::report
