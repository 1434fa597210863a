// The forms of a year-end statement (report/statement.h): terminal text,
// self-contained HTML, JSON, CSV files, an XLSX workbook, and PDF through a
// headless Chromium.
//
// Contract
//  - Every form is drawn from statement_sections(), one table per section, so
//    the forms cannot disagree. Money cells hold the exact Decimal: the
//    terminal and HTML show two places, CSV and JSON the exact text, XLSX a
//    number with a two-place format. Percent cells hold fractions.
//  - Text fits 100 columns for ordinary names and amounts. HTML needs no
//    network (inline CSS and SVG, no scripts, no links out); every piece of
//    user text is escaped.
//  - write_* functions write to a temporary file beside the target and rename
//    it into place, so a failure leaves no half-written file; they throw
//    InputError naming the path and the reason. print_pdf() throws InputError
//    when Chromium is missing (saying how to install it) or fails.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "report/cells.h"
#include "report/statement.h"
#include "report/table.h"

namespace keel::report {

// Headings and alignment, as for a terminal table.
using SectionColumn = Table::Column;

struct Section {
  std::string key;    // file and sheet name: "summary", "performance", ...
  std::string title;  // heading shown to people
  std::vector<SectionColumn> columns;
  std::vector<std::vector<Cell>> rows;
  std::vector<std::size_t> emphasised;  // rows that are totals (a rule before them)
  std::vector<std::string> notes;       // sentences printed under the table
};

std::vector<Section> statement_sections(const Statement& s);

std::string statement_text(const Statement& s, bool colour);
std::string statement_html(const Statement& s);
std::string statement_json(const Statement& s);  // ends with a newline

void write_text_file(const std::filesystem::path& file, const std::string& content);
// One CSV file per section, DIR/<key>.csv; DIR is created if missing (its
// parent must exist).
void write_statement_csv(const Statement& s, const std::filesystem::path& dir);
void write_statement_xlsx(const Statement& s, const std::filesystem::path& file);

// The first of chromium, chromium-browser on PATH; nullopt when there is none.
std::optional<std::filesystem::path> find_chromium();
// Prints an HTML file to PDF with a headless Chromium and a fresh profile.
void print_pdf(const std::filesystem::path& html, const std::filesystem::path& pdf);

}  // namespace keel::report
