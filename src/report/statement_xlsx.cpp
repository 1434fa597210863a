// The statement as an XLSX workbook (libxlsxwriter): one sheet per section,
// numbers as numbers with formats, dates as dates, text as text; totals as
// formulas with keel's figures cached; an autofilter on each table; native
// charts of the monthly returns and, on a sheet of its own, the growth.
#include <fmt/format.h>
#include <xlsxwriter.h>

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstdlib>

#include "core/error.h"
#include "core/files.h"
#include "core/shared_library.h"
#include "core/text.h"
#include "report/statement_forms.h"

#ifndef KEEL_XLSXWRITER_SONAME
#error \
    "KEEL_XLSXWRITER_SONAME: the SONAME of the libxlsxwriter keel was built with (CMakeLists.txt)"
#endif
static_assert(sizeof(KEEL_XLSXWRITER_SONAME) > 1, "KEEL_XLSXWRITER_SONAME is empty");

namespace keel::report {
namespace {

// The functions of libxlsxwriter the statement uses, typed from <xlsxwriter.h>.
// clang-format off
#define KEEL_XLSX_FUNCTIONS(X)                                                                     \
  X(workbook_new) X(workbook_add_format) X(workbook_add_worksheet) X(workbook_add_chart)           \
  X(workbook_set_properties) X(workbook_close) X(format_set_bold) X(format_set_italic)             \
  X(format_set_font_size) X(format_set_font_color) X(format_set_bottom) X(format_set_top)          \
  X(format_set_num_format) X(worksheet_set_paper) X(worksheet_write_string)                        \
  X(worksheet_write_number) X(worksheet_write_formula_num) X(worksheet_write_datetime)             \
  X(worksheet_set_column) X(worksheet_freeze_panes) X(worksheet_autofilter)                        \
  X(worksheet_insert_chart) X(chart_title_set_name) X(chart_add_series)                            \
  X(chart_series_set_categories) X(chart_series_set_values) X(chart_series_set_name_range)         \
  X(chart_series_set_fill) X(chart_series_set_line) X(chart_axis_set_num_format)                   \
  X(chart_legend_set_position) X(lxw_strerror)
// clang-format on

struct Xlsx {
  KEEL_XLSX_FUNCTIONS(KEEL_LIBRARY_MEMBER)
};

// libxlsxwriter, opened by the first XLSX of the run (core/shared_library.h).
const Xlsx& xlsx(std::string_view option) {
  static const Xlsx loaded = [&] {
    constexpr const char* soname = KEEL_XLSXWRITER_SONAME;
    const std::string need = fmt::format("{}: writing XLSX", option);
    Xlsx table;
    void* handle = open_shared_library(soname, need);
    KEEL_XLSX_FUNCTIONS(KEEL_LIBRARY_BIND)
    return table;
  }();
  return loaded;
}

// The HTML form's colours: copper for the portfolio, sage for the benchmark.
constexpr lxw_color_t kCopper = 0xB5562B;
constexpr lxw_color_t kSage = 0x6F8F72;

struct Formats {
  lxw_format* title = nullptr;
  lxw_format* heading = nullptr;
  lxw_format* money = nullptr;
  lxw_format* money_total = nullptr;
  lxw_format* percent = nullptr;
  lxw_format* date = nullptr;
  lxw_format* note = nullptr;
};

Formats make_formats(const Xlsx& x, lxw_workbook* wb) {
  Formats f;
  f.title = x.workbook_add_format(wb);
  x.format_set_bold(f.title);
  x.format_set_font_size(f.title, 13);
  x.format_set_font_color(f.title, 0x1F3B4D);
  f.heading = x.workbook_add_format(wb);
  x.format_set_bold(f.heading);
  x.format_set_bottom(f.heading, LXW_BORDER_THIN);
  // Formats are numbered in the order they are added: keep it.
  const auto numbers = [&](const char* pattern) {
    lxw_format* n = x.workbook_add_format(wb);
    x.format_set_num_format(n, pattern);
    return n;
  };
  f.money = numbers("#,##0.00;-#,##0.00");
  f.money_total = numbers("#,##0.00;-#,##0.00");
  x.format_set_bold(f.money_total);
  x.format_set_top(f.money_total, LXW_BORDER_THIN);
  f.percent = numbers("0.00%");
  f.date = numbers("yyyy-mm-dd");
  f.note = x.workbook_add_format(wb);
  x.format_set_italic(f.note);
  return f;
}

void check(const Xlsx& x, lxw_error err, const OutputFile& out) {
  if (err != LXW_NO_ERROR)
    throw InputError(fmt::format("{} {}: cannot write: {}", out.option(),
                                 printable(out.target().string()), x.lxw_strerror(err)));
}

// Table rows start below the title (row 0), a blank row and the heading row.
constexpr lxw_row_t kFirstRow = 3;

// "D7": a cell of a section's table in A1 notation (at most 26 columns).
std::string cell_name(std::size_t row, std::size_t column) {
  return fmt::format("{}{}", static_cast<char>('A' + column), kFirstRow + row + 1);
}

std::string formula_text(const Formula& f) {
  const std::string range =
      fmt::format("{}:{}", cell_name(f.first, f.column), cell_name(f.last, f.column));
  switch (f.kind) {
    case Formula::Kind::sum:
      return fmt::format("=SUM({})", range);
    case Formula::Kind::sum_if:
      return fmt::format("=SUMIF({}:{},\"{}\",{})", cell_name(f.first, f.if_column),
                         cell_name(f.last, f.if_column), f.if_text, range);
    case Formula::Kind::difference:
      return fmt::format("={}-{}", cell_name(f.first, f.column), cell_name(f.last, f.column));
  }
  return {};
}

const Formula* formula_at(const Section& sec, std::size_t row, std::size_t column) {
  for (const auto& f : sec.formulas)
    if (f.row == row && f.column == column) return &f;
  return nullptr;
}

// Excel's paper codes: 1 is Letter, 9 is A4 (ECMA-376 Part 1, 18.3.1.64).
std::uint8_t paper_code(Paper paper) {
  return paper == Paper::letter ? 1 : 9;
}

struct SheetWriter {
  const Xlsx& x;
  lxw_workbook* wb;
  const Formats& f;
  const OutputFile& file;
  Paper paper;

  lxw_worksheet* add(const std::string& name) const {
    lxw_worksheet* ws = x.workbook_add_worksheet(wb, name.c_str());
    x.worksheet_set_paper(ws, paper_code(paper));
    return ws;
  }

  void section(const Section& sec) const {
    lxw_worksheet* ws = add(sec.key);
    check(x, x.worksheet_write_string(ws, 0, 0, sec.title.c_str(), f.title), file);
    std::vector<double> widths(sec.columns.size(), 10);
    for (std::size_t c = 0; c < sec.columns.size(); ++c) {
      check(x,
            x.worksheet_write_string(ws, kFirstRow - 1, static_cast<lxw_col_t>(c),
                                     sec.columns[c].heading.c_str(), f.heading),
            file);
      widths[c] = std::max(widths[c], static_cast<double>(sec.columns[c].heading.size()) + 2);
    }
    lxw_row_t r = kFirstRow;
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
            check(x, x.worksheet_write_string(ws, r, col, cell.text.c_str(), nullptr), file);
            if (sec.key != "cautions")
              widths[c] = std::max(widths[c], static_cast<double>(cell.text.size()) + 2);
            break;
          case CellKind::money:
            // A total keeps its formula; the cached result is keel's exact figure.
            if (const Formula* formula = formula_at(sec, i, c))
              check(x,
                    x.worksheet_write_formula_num(ws, r, col, formula_text(*formula).c_str(),
                                                  total ? f.money_total : f.money,
                                                  cell.number.to_double()),
                    file);
            else
              check(x,
                    x.worksheet_write_number(ws, r, col, cell.number.to_double(),
                                             total ? f.money_total : f.money),
                    file);
            widths[c] = std::max(widths[c], 14.0);
            break;
          case CellKind::quantity:
            check(x, x.worksheet_write_number(ws, r, col, cell.number.to_double(), nullptr), file);
            break;
          case CellKind::percent:
            check(x, x.worksheet_write_number(ws, r, col, cell.ratio, f.percent), file);
            break;
          case CellKind::date: {
            lxw_datetime dt{cell.day.year(), cell.day.month(), cell.day.day(), 0, 0, 0};
            check(x, x.worksheet_write_datetime(ws, r, col, &dt, f.date), file);
            widths[c] = std::max(widths[c], 12.0);
            break;
          }
          case CellKind::integer:
            check(x, x.worksheet_write_number(ws, r, col, static_cast<double>(cell.whole), nullptr),
                  file);
            break;
        }
      }
    }
    ++r;
    for (const auto& note : sec.notes)
      check(x, x.worksheet_write_string(ws, r++, 0, note.c_str(), f.note), file);
    for (std::size_t c = 0; c < widths.size(); ++c)
      x.worksheet_set_column(ws, static_cast<lxw_col_t>(c), static_cast<lxw_col_t>(c),
                             sec.key == "cautions" ? 120 : std::min(widths[c], 48.0), nullptr);
    x.worksheet_freeze_panes(ws, kFirstRow, 0);
    if (sec.key != "cautions") {
      // Heading and detail rows; the totals below stay put when sorting.
      const std::size_t details = sec.emphasised.empty() ? sec.rows.size() : sec.emphasised.front();
      check(x,
            x.worksheet_autofilter(ws, kFirstRow - 1, 0,
                                   static_cast<lxw_row_t>(kFirstRow - 1 + details),
                                   static_cast<lxw_col_t>(sec.columns.size() - 1)),
            file);
    }
    if (sec.key == "monthly") monthly_chart(ws, sec);
  }

  // Columns of the portfolio (and benchmark) beside the month table.
  void monthly_chart(lxw_worksheet* ws, const Section& sec) const {
    const std::size_t months = sec.emphasised.empty() ? sec.rows.size() : sec.emphasised.front();
    if (months == 0) return;
    lxw_chart* chart = x.workbook_add_chart(wb, LXW_CHART_COLUMN);
    x.chart_title_set_name(chart, "Monthly time-weighted returns");
    const std::size_t series = std::min<std::size_t>(sec.columns.size() - 1, 2);
    for (std::size_t k = 0; k < series; ++k) {
      lxw_chart_series* sr = x.chart_add_series(chart, nullptr, nullptr);
      const auto last = static_cast<lxw_row_t>(kFirstRow + months - 1);
      x.chart_series_set_categories(sr, sec.key.c_str(), kFirstRow, 0, last, 0);
      x.chart_series_set_values(sr, sec.key.c_str(), kFirstRow, static_cast<lxw_col_t>(k + 1), last,
                                static_cast<lxw_col_t>(k + 1));
      x.chart_series_set_name_range(sr, sec.key.c_str(), kFirstRow - 1,
                                    static_cast<lxw_col_t>(k + 1));
      lxw_chart_fill fill{};
      fill.color = k == 0 ? kCopper : kSage;
      x.chart_series_set_fill(sr, &fill);
    }
    x.chart_axis_set_num_format(chart->y_axis, "0%");
    x.chart_legend_set_position(chart, LXW_CHART_LEGEND_BOTTOM);
    check(x, x.worksheet_insert_chart(ws, 1, static_cast<lxw_col_t>(sec.columns.size() + 1), chart),
          file);
  }

  // The growth of 1 since the close before the period, as a cumulative
  // return, portfolio beside benchmark: a table and its line chart.
  void growth(const Statement& s) const {
    lxw_worksheet* ws = add("growth");
    const std::string title =
        fmt::format("Growth since the close of {} (time-weighted)", s.from.plus_days(-1).str());
    check(x, x.worksheet_write_string(ws, 0, 0, title.c_str(), f.title), file);
    const bool bench = !s.benchmark_growth.empty();
    check(x, x.worksheet_write_string(ws, kFirstRow - 1, 0, "day", f.heading), file);
    check(x, x.worksheet_write_string(ws, kFirstRow - 1, 1, "portfolio", f.heading), file);
    if (bench)
      check(x,
            x.worksheet_write_string(ws, kFirstRow - 1, 2, s.benchmark.value_or("").c_str(),
                                     f.heading),
            file);
    lxw_row_t r = kFirstRow;
    for (const auto& p : s.growth) {
      lxw_datetime dt{p.day.year(), p.day.month(), p.day.day(), 0, 0, 0};
      check(x, x.worksheet_write_datetime(ws, r, 0, &dt, f.date), file);
      check(x, x.worksheet_write_number(ws, r, 1, p.level - 1, f.percent), file);
      // The benchmark's level on the same day, when it has one.
      for (const auto& b : s.benchmark_growth)
        if (b.day == p.day)
          check(x, x.worksheet_write_number(ws, r, 2, b.level - 1, f.percent), file);
      ++r;
    }
    x.worksheet_set_column(ws, 0, 0, 12, nullptr);
    x.worksheet_set_column(ws, 1, 2, 12, nullptr);
    x.worksheet_freeze_panes(ws, kFirstRow, 0);
    if (s.growth.empty()) return;
    check(x, x.worksheet_autofilter(ws, kFirstRow - 1, 0, r - 1, bench ? 2 : 1), file);
    lxw_chart* chart = x.workbook_add_chart(wb, LXW_CHART_LINE);
    x.chart_title_set_name(chart, "Growth, time-weighted");
    for (lxw_col_t c = 1; c <= (bench ? 2 : 1); ++c) {
      lxw_chart_series* sr = x.chart_add_series(chart, nullptr, nullptr);
      x.chart_series_set_categories(sr, "growth", kFirstRow, 0, r - 1, 0);
      x.chart_series_set_values(sr, "growth", kFirstRow, c, r - 1, c);
      x.chart_series_set_name_range(sr, "growth", kFirstRow - 1, c);
      lxw_chart_line line{};
      line.color = c == 1 ? kCopper : kSage;
      line.width = 1.75;
      x.chart_series_set_line(sr, &line);
    }
    x.chart_axis_set_num_format(chart->x_axis, "mmm");
    x.chart_axis_set_num_format(chart->y_axis, "0%");
    x.chart_legend_set_position(chart, LXW_CHART_LEGEND_BOTTOM);
    check(x, x.worksheet_insert_chart(ws, 1, 4, chart), file);
  }
};

}  // namespace

void load_xlsx_writer(std::string_view option) {
  xlsx(option);
}

void write_statement_xlsx(const Statement& s, OutputFile& out, Paper paper) {
  const Xlsx& x = xlsx(out.option());
  lxw_workbook* wb = x.workbook_new(out.path_for_writer().c_str());
  if (!wb) check(x, LXW_ERROR_CREATING_XLSX_FILE, out);
  const Formats f = make_formats(x, wb);
  lxw_doc_properties props{};
  std::string title = fmt::format("keel statement {}: {}", s.year, s.scope);
  props.title = title.data();
  x.workbook_set_properties(wb, &props);
  try {
    const SheetWriter writer{x, wb, f, out, paper};
    for (const auto& sec : statement_sections(s)) {
      writer.section(sec);
      if (sec.key == "performance") writer.growth(s);
    }
  } catch (...) {
    x.workbook_close(wb);
    throw;
  }
  // The workbook is written here; libxlsxwriter's own text for a failed
  // write ("file operation") does not say why, the system's error does.
  errno = 0;
  const lxw_error closed = x.workbook_close(wb);
  if (closed != LXW_NO_ERROR && errno != 0)
    throw InputError(fmt::format("{} {}: cannot write: {}", out.option(),
                                 printable(out.target().string()), os_error_text(errno)));
  check(x, closed, out);
  out.commit();
}

}  // namespace keel::report
