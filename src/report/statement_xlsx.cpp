// The statement as an XLSX workbook (libxlsxwriter): one sheet per section,
// numbers as numbers with formats, dates as dates, text as text.
#include <fmt/format.h>
#include <xlsxwriter.h>

#include <algorithm>
#include <cstdio>
#include <cstdlib>

#include "core/error.h"
#include "core/text.h"
#include "report/statement_forms.h"

namespace keel::report {
namespace {

struct Formats {
  lxw_format* title = nullptr;
  lxw_format* heading = nullptr;
  lxw_format* money = nullptr;
  lxw_format* money_total = nullptr;
  lxw_format* percent = nullptr;
  lxw_format* date = nullptr;
  lxw_format* note = nullptr;
};

Formats make_formats(lxw_workbook* wb) {
  Formats f;
  f.title = workbook_add_format(wb);
  format_set_bold(f.title);
  format_set_font_size(f.title, 13);
  format_set_font_color(f.title, 0x1F3B4D);
  f.heading = workbook_add_format(wb);
  format_set_bold(f.heading);
  format_set_bottom(f.heading, LXW_BORDER_THIN);
  f.money = workbook_add_format(wb);
  format_set_num_format(f.money, "#,##0.00;-#,##0.00");
  f.money_total = workbook_add_format(wb);
  format_set_num_format(f.money_total, "#,##0.00;-#,##0.00");
  format_set_bold(f.money_total);
  format_set_top(f.money_total, LXW_BORDER_THIN);
  f.percent = workbook_add_format(wb);
  format_set_num_format(f.percent, "0.00%");
  f.date = workbook_add_format(wb);
  format_set_num_format(f.date, "yyyy-mm-dd");
  f.note = workbook_add_format(wb);
  format_set_italic(f.note);
  return f;
}

void check(lxw_error err, const std::filesystem::path& file) {
  if (err != LXW_NO_ERROR)
    throw InputError(
        fmt::format("cannot write '{}': {}", printable(file.string()), lxw_strerror(err)));
}

}  // namespace

void write_statement_xlsx(const Statement& s, const std::filesystem::path& file) {
  const auto parent = file.has_parent_path() ? file.parent_path() : std::filesystem::path(".");
  std::error_code ec;
  if (!std::filesystem::is_directory(parent, ec))
    throw InputError(fmt::format("cannot write '{}': the folder '{}' does not exist",
                                 printable(file.string()), printable(parent.string())));
  const std::string temp =
      (parent / fmt::format(".{}.keel-tmp.xlsx", file.filename().string())).string();
  lxw_workbook* wb = workbook_new(temp.c_str());
  if (!wb) throw InputError(fmt::format("cannot write '{}'", printable(file.string())));
  const Formats f = make_formats(wb);
  lxw_doc_properties props{};
  std::string title = fmt::format("keel statement {}: {}", s.year, s.scope);
  props.title = title.data();
  workbook_set_properties(wb, &props);
  try {
    for (const auto& sec : statement_sections(s)) {
      lxw_worksheet* ws = workbook_add_worksheet(wb, sec.key.c_str());
      check(worksheet_write_string(ws, 0, 0, sec.title.c_str(), f.title), file);
      std::vector<double> widths(sec.columns.size(), 10);
      for (std::size_t c = 0; c < sec.columns.size(); ++c) {
        check(worksheet_write_string(ws, 2, static_cast<lxw_col_t>(c),
                                     sec.columns[c].heading.c_str(), f.heading),
              file);
        widths[c] = std::max(widths[c], static_cast<double>(sec.columns[c].heading.size()) + 2);
      }
      lxw_row_t r = 3;
      for (std::size_t i = 0; i < sec.rows.size(); ++i, ++r) {
        const bool total =
            std::find(sec.emphasised.begin(), sec.emphasised.end(), i) != sec.emphasised.end();
        for (std::size_t c = 0; c < sec.rows[i].size(); ++c) {
          const Cell& cell = sec.rows[i][c];
          const auto col = static_cast<lxw_col_t>(c);
          switch (cell.kind) {
            case CellKind::empty:
              break;
            case CellKind::text:
              check(worksheet_write_string(ws, r, col, cell.text.c_str(), nullptr), file);
              if (sec.key != "cautions")
                widths[c] = std::max(widths[c], static_cast<double>(cell.text.size()) + 2);
              break;
            case CellKind::money:
              check(worksheet_write_number(ws, r, col, cell.number.to_double(),
                                           total ? f.money_total : f.money),
                    file);
              widths[c] = std::max(widths[c], 14.0);
              break;
            case CellKind::quantity:
              check(worksheet_write_number(ws, r, col, cell.number.to_double(), nullptr), file);
              break;
            case CellKind::percent:
              check(worksheet_write_number(ws, r, col, cell.ratio, f.percent), file);
              break;
            case CellKind::date: {
              lxw_datetime dt{cell.day.year(), cell.day.month(), cell.day.day(), 0, 0, 0};
              check(worksheet_write_datetime(ws, r, col, &dt, f.date), file);
              widths[c] = std::max(widths[c], 12.0);
              break;
            }
            case CellKind::integer:
              check(worksheet_write_number(ws, r, col, static_cast<double>(cell.whole), nullptr),
                    file);
              break;
          }
        }
      }
      ++r;
      for (const auto& note : sec.notes)
        check(worksheet_write_string(ws, r++, 0, note.c_str(), f.note), file);
      for (std::size_t c = 0; c < widths.size(); ++c)
        worksheet_set_column(ws, static_cast<lxw_col_t>(c), static_cast<lxw_col_t>(c),
                             sec.key == "cautions" ? 120 : std::min(widths[c], 48.0), nullptr);
      worksheet_freeze_panes(ws, 3, 0);
    }
  } catch (...) {
    workbook_close(wb);
    std::remove(temp.c_str());
    throw;
  }
  const lxw_error err = workbook_close(wb);
  if (err != LXW_NO_ERROR) {
    std::remove(temp.c_str());
    check(err, file);
  }
  if (std::rename(temp.c_str(), file.c_str()) != 0) {
    std::remove(temp.c_str());
    throw InputError(fmt::format("cannot write '{}'", printable(file.string())));
  }
}

}  // namespace keel::report
