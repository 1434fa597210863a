// The statement as one self-contained HTML page: inline CSS, three inline SVG
// charts drawn here (growth, monthly returns, allocation), no scripts and no
// references outside the file. Laid out for screens and for printing on the
// paper asked for (CSS @page size), each printed page with a running title
// and "page N of M" in its margins (CSS page margin boxes, which Chromium
// draws when it prints the PDF). Dates never break across lines.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <functional>

#include "core/text.h"
#include "report/html.h"
#include "report/statement_forms.h"

namespace keel::report {
namespace {

// keel's palette: ink and slate for structure, copper for the portfolio,
// sage for the benchmark, on warm paper.
constexpr const char* kInk = "#1d2a33";
constexpr const char* kSlate = "#5b6b76";
constexpr const char* kRule = "#d9d2c5";
constexpr const char* kCopper = "#b5562b";
constexpr const char* kSage = "#6f8f72";
constexpr const char* kPaper = "#fbf8f2";
// The allocation's bars: one colour, neither the portfolio's nor the
// benchmark's, so no bar reads as either; each bar carries its own labels.
constexpr const char* kAllocation = kSlate;

std::string esc(const std::string& raw) {
  return html_escape(raw);
}

// 1234567.5 -> "1,234,567.50"
// Built front to back: GCC 12 reports -Wrestrict (a false positive) when
// separators are inserted into the middle of a string at -O2 and above.
std::string grouped(const Decimal& d) {
  const std::string s = d.fixed(2);
  const std::size_t first = !s.empty() && s.front() == '-' ? 1 : 0;
  const std::size_t point = std::min(s.find('.'), s.size());
  std::string out(s, 0, first);
  for (std::size_t i = first; i < point; ++i) {
    if (i > first && (point - i) % 3 == 0) out += ',';
    out += s[i];
  }
  out.append(s, point);
  return out;
}

bool is_digit(char c) {
  return c >= '0' && c <= '9';
}

// Escaped text with every YYYY-MM-DD in it kept on one line (a browser may
// break after a hyphen).
std::string esc_dates_whole(const std::string& raw) {
  const std::string text = esc(raw);
  std::string out;
  std::size_t i = 0;
  while (i < text.size()) {
    const bool date = i + 10 <= text.size() && is_digit(text[i]) && is_digit(text[i + 1]) &&
                      is_digit(text[i + 2]) && is_digit(text[i + 3]) && text[i + 4] == '-' &&
                      is_digit(text[i + 5]) && is_digit(text[i + 6]) && text[i + 7] == '-' &&
                      is_digit(text[i + 8]) && is_digit(text[i + 9]);
    if (date) {
      out += "<span class=\"date\">" + text.substr(i, 10) + "</span>";
      i += 10;
    } else {
      out += text[i++];
    }
  }
  return out;
}

std::string html_cell(const Cell& cell) {
  if (cell.kind == CellKind::money) return grouped(cell.number);
  if (cell.kind == CellKind::date) return esc(display(cell));  // the cell itself does not wrap
  return esc_dates_whole(display(cell));
}

// A CSS string literal of user text, safe inside a <style> element: quotes,
// backslashes, control characters and markup characters as CSS escapes.
std::string css_string(const std::string& raw) {
  const std::string text = valid_utf8(raw) ? raw : printable(raw);
  std::string out = "\"";
  for (const char c : text) {
    const auto u = static_cast<unsigned char>(c);
    if (c == '"' || c == '\\')
      out += fmt::format("\\{}", c);
    else if (u < 0x20 || u == 0x7f || c == '<' || c == '>' || c == '&')
      out += fmt::format("\\{:x} ", u);
    else
      out += c;
  }
  return out + "\"";
}

std::string f1(double x) {
  return fmt::format("{:.1f}", x);
}

const char* const kMonths[] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                               "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};

struct Frame {
  double width = 680, height = 262, left = 52, right = 14, top = 28, bottom = 34;
  double x0() const { return left; }
  double x1() const { return width - right; }
  double y0() const { return height - bottom; }
  double y1() const { return top; }
};

std::string svg_open(const Frame& f, const std::string& label) {
  return fmt::format(
      "<svg viewBox=\"0 0 {} {}\" role=\"img\" "
      "aria-label=\"{}\" class=\"chart\">\n",
      f.width, f.height, esc(label));
}

// Horizontal grid lines and percent labels for values lo..hi (fractions).
std::string y_grid(const Frame& f, double lo, double hi, const std::function<double(double)>& y) {
  std::string out;
  const double step = nice_step(hi - lo, 5);
  for (double v = std::ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) {
    const double yy = y(v);
    const bool zero = std::abs(v) < step * 1e-9;
    out += fmt::format(
        "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"{}\"/>\n",
        f1(f.x0()), f1(yy), f1(f.x1()), f1(yy), zero ? kSlate : kRule, zero ? "1" : "0.6");
    out +=
        fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"end\" class=\"tick\">{:.{}f}%</text>\n",
                    f1(f.x0() - 6), f1(yy + 3.5), zero ? 0.0 : v * 100, step * 100 < 1 ? 1 : 0);
  }
  return out;
}

std::string legend(const Frame& f, bool benchmark, const std::string& bench_name) {
  std::string out = fmt::format(
      "<rect x=\"{}\" y=\"{}\" width=\"12\" height=\"4\" fill=\"{}\"/><text x=\"{}\" y=\"{}\" "
      "class=\"legend\">portfolio</text>\n",
      f1(f.x0() + 8), f1(f.y1() - 18), kCopper, f1(f.x0() + 24), f1(f.y1() - 13));
  if (benchmark)
    out += fmt::format(
        "<rect x=\"{}\" y=\"{}\" width=\"12\" height=\"4\" fill=\"{}\"/><text x=\"{}\" y=\"{}\" "
        "class=\"legend\">{}</text>\n",
        f1(f.x0() + 96), f1(f.y1() - 18), kSage, f1(f.x0() + 112), f1(f.y1() - 13),
        esc(bench_name));
  return out;
}

std::string growth_chart(const Statement& s) {
  Frame f;
  const Date start = s.from.plus_days(-1);
  const double span_days = std::max(1, s.to - start);
  double lo = 0, hi = 0;
  for (const auto* series : {&s.growth, &s.benchmark_growth})
    for (const auto& p : *series) {
      lo = std::min(lo, p.level - 1);
      hi = std::max(hi, p.level - 1);
    }
  const double pad = std::max(0.01, (hi - lo) * 0.08);
  lo -= pad;
  hi += pad;
  auto x = [&](Date d) { return f.x0() + (f.x1() - f.x0()) * ((d - start) / span_days); };
  auto y = [&](double v) { return f.y0() - (f.y0() - f.y1()) * ((v - lo) / (hi - lo)); };
  std::string out = svg_open(f, "Growth of the portfolio and the benchmark over the period");
  out += y_grid(f, lo, hi, y);
  for (int m = 1; m <= 12; ++m) {
    const Date first = Date::from_ymd(s.year, m, 1);
    if (first < start || first > s.to) continue;
    out += fmt::format(
        "<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\" stroke=\"{3}\" stroke-width=\"0.6\"/>"
        "<text x=\"{4}\" y=\"{5}\" class=\"tick\">{6}</text>\n",
        f1(x(first)), f1(f.y0()), f1(f.y0() + 4), kSlate, f1(x(first) + 3), f1(f.y0() + 16),
        kMonths[m - 1]);
  }
  auto polyline = [&](const std::vector<GrowthPoint>& pts, const char* colour, const char* dash) {
    if (pts.empty()) return std::string();
    std::string d;
    // A step line: the level holds until the next valuation day.
    for (std::size_t i = 0; i < pts.size(); ++i) {
      if (i) d += fmt::format(" {},{}", f1(x(pts[i].day)), f1(y(pts[i - 1].level - 1)));
      d += fmt::format(" {},{}", f1(x(pts[i].day)), f1(y(pts[i].level - 1)));
    }
    return fmt::format(
        "<polyline fill=\"none\" stroke=\"{}\" stroke-width=\"1.8\" stroke-linejoin=\"round\"{} "
        "points=\"{}\"/>\n",
        colour, dash, d);
  };
  out += polyline(s.benchmark_growth, kSage, " stroke-dasharray=\"5 3\"");
  out += polyline(s.growth, kCopper, "");
  out += legend(f, !s.benchmark_growth.empty(), s.benchmark.value_or(""));
  out += "</svg>\n";
  return out;
}

std::string monthly_chart(const Statement& s) {
  Frame f;
  double lo = 0, hi = 0;
  for (const auto& m : s.months) {
    lo = std::min({lo, m.twr, m.benchmark.value_or(0)});
    hi = std::max({hi, m.twr, m.benchmark.value_or(0)});
  }
  const double pad = std::max(0.005, (hi - lo) * 0.1);
  lo -= pad;
  hi += pad;
  auto y = [&](double v) { return f.y0() - (f.y0() - f.y1()) * ((v - lo) / (hi - lo)); };
  std::string out = svg_open(f, "Monthly time-weighted returns, portfolio beside benchmark");
  out += y_grid(f, lo, hi, y);
  const double slot = (f.x1() - f.x0()) / 12;
  const double bar = slot * (s.benchmark ? 0.34 : 0.55);
  auto rect = [&](double left, double v, const char* colour) {
    const double top = std::min(y(v), y(0)), height = std::max(0.6, std::abs(y(v) - y(0)));
    return fmt::format(
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" rx=\"1\"/>\n", f1(left),
        f1(top), f1(bar), f1(height), colour);
  };
  for (int m = 1; m <= 12; ++m) {
    const double centre = f.x0() + slot * (m - 0.5);
    out += fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" class=\"tick\">{}</text>\n",
                       f1(centre), f1(f.y0() + 16), kMonths[m - 1]);
  }
  for (const auto& m : s.months) {
    const double centre = f.x0() + slot * (m.month - 0.5);
    if (s.benchmark) {
      out += rect(centre - bar - 1, m.twr, kCopper);
      if (m.benchmark) out += rect(centre + 1, *m.benchmark, kSage);
    } else {
      out += rect(centre - bar / 2, m.twr, kCopper);
    }
  }
  out += legend(f, s.benchmark.has_value(), s.benchmark.value_or(""));
  out += "</svg>\n";
  return out;
}

std::string allocation_chart(const Statement& s) {
  Frame f;
  f.left = 110;
  f.right = 150;
  f.top = 10;
  f.bottom = 10;
  const double row = 22;
  f.height = f.top + f.bottom + row * static_cast<double>(s.allocation.size());
  double most = 0;
  for (const auto& a : s.allocation) most = std::max(most, a.weight.to_double());
  if (!(most > 0)) most = 1;
  std::string out = svg_open(f, "Allocation at the end of the period");
  for (std::size_t i = 0; i < s.allocation.size(); ++i) {
    const auto& a = s.allocation[i];
    const double w = a.weight.to_double();
    const double top = f.top + row * static_cast<double>(i);
    const double length = std::max(0.0, (f.x1() - f.x0()) * w / most);
    out += fmt::format(
        "<text x=\"{}\" y=\"{}\" text-anchor=\"end\" class=\"label\">{}</text>\n"
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" rx=\"1.5\"/>\n"
        "<text x=\"{}\" y=\"{}\" class=\"label\">{:.2f}% \u00b7 {}</text>\n",
        f1(f.x0() - 8), f1(top + 15), esc(a.label), f1(f.x0()), f1(top + 4), f1(length),
        f1(row - 8), kAllocation, f1(f.x0() + length + 6), f1(top + 15), w * 100, grouped(a.value));
  }
  out += "</svg>\n";
  return out;
}

std::string table_html(const Section& sec) {
  // Tables that fit on a page are kept whole; longer ones break between rows.
  std::string out =
      sec.rows.size() <= 20 ? "<table class=\"short\">\n<thead><tr>" : "<table>\n<thead><tr>";
  for (const auto& c : sec.columns)
    out += fmt::format("<th{}>{}</th>", c.align == Align::right ? " class=\"num\"" : "",
                       esc(c.heading));
  out += "</tr></thead>\n<tbody>\n";
  // Rows from the first emphasised one on are totals; a rule goes before each emphasised one.
  const std::size_t first_total = sec.emphasised.empty() ? sec.rows.size() : sec.emphasised.front();
  for (std::size_t i = 0; i < sec.rows.size(); ++i) {
    const bool ruled =
        std::find(sec.emphasised.begin(), sec.emphasised.end(), i) != sec.emphasised.end();
    out += i < first_total ? "<tr>" : ruled ? "<tr class=\"total ruled\">" : "<tr class=\"total\">";
    for (std::size_t c = 0; c < sec.rows[i].size(); ++c) {
      const bool num = sec.columns[c].align == Align::right;
      const bool negative =
          (sec.rows[i][c].kind == CellKind::money && sec.rows[i][c].number.is_negative()) ||
          (sec.rows[i][c].kind == CellKind::percent && sec.rows[i][c].ratio < 0);
      std::string cls = num ? "num" : "";
      if (negative) cls += " neg";
      if (sec.rows[i][c].kind == CellKind::date) cls += cls.empty() ? "date" : " date";
      out += fmt::format("<td{}>{}</td>", cls.empty() ? "" : " class=\"" + cls + "\"",
                         html_cell(sec.rows[i][c]));
    }
    out += "</tr>\n";
  }
  out += "</tbody>\n</table>\n";
  for (const auto& note : sec.notes) out += "<p class=\"note\">" + esc_dates_whole(note) + "</p>\n";
  return out;
}

// `title` and `period` are CSS strings (css_string()) for the page margins.
std::string css(Paper paper, const std::string& title, const std::string& period) {
  return fmt::format(R"(
:root {{ --ink: {ink}; --slate: {slate}; --rule: {rule}; --copper: {copper}; --sage: {sage};
        --paper: {paper}; }}
* {{ box-sizing: border-box; }}
html {{ background: var(--paper); }}
body {{ margin: 0 auto; max-width: 186mm; padding: 10mm 0 14mm; color: var(--ink);
       font: 10pt/1.45 "DejaVu Sans", "Noto Sans", "Liberation Sans", sans-serif;
       font-variant-numeric: tabular-nums; }}
header {{ border-bottom: 2.5pt solid var(--ink); padding-bottom: 3mm; margin-bottom: 5mm; }}
.mark {{ font: 600 8pt/1 "DejaVu Sans Mono", "Liberation Mono", monospace; letter-spacing: .28em;
        text-transform: uppercase; color: var(--copper); }}
h1 {{ font: 600 21pt/1.15 "DejaVu Serif", "Noto Serif", "Liberation Serif", serif;
     margin: 2mm 0 1mm; }}
h2 {{ font: 600 12.5pt/1.2 "DejaVu Serif", "Noto Serif", "Liberation Serif", serif;
     margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: .6pt solid var(--rule);
     break-after: avoid; page-break-after: avoid; }}
.meta {{ color: var(--slate); margin: 0; }}
.brief {{ margin: 3mm 0 0; padding: 2mm 3mm; border-left: 3pt solid var(--copper);
         background: #f3ede2; font-size: 9pt; }}
table {{ border-collapse: collapse; width: 100%; font-size: 9pt; margin: 1mm 0 2mm; }}
table.short {{ break-inside: avoid; page-break-inside: avoid; }}
thead {{ display: table-header-group; }}
tr {{ break-inside: avoid; page-break-inside: avoid; }}
th {{ text-align: left; font-weight: 600; color: var(--slate); border-bottom: 1pt solid var(--ink);
     padding: 1.2mm 1.6mm; white-space: nowrap; }}
td {{ padding: .9mm 1.6mm; border-bottom: .4pt solid var(--rule); }}
.num, .date {{ white-space: nowrap; }}
.num {{ text-align: right; }}
.neg {{ color: #8f3a22; }}
tr.total td {{ font-weight: 600; background: #f3ede2; }}
tr.ruled td {{ border-top: 1pt solid var(--ink); }}
.note {{ color: var(--slate); font-size: 8.5pt; margin: 1mm 0; }}
figure {{ margin: 2mm 0 3mm; break-inside: avoid; page-break-inside: avoid; }}
figcaption {{ font-size: 8.5pt; color: var(--slate); margin-top: 1mm; }}
svg.chart {{ width: 100%; height: auto; display: block; background: #fffdf9;
            border: .5pt solid var(--rule); }}
svg text {{ font-family: "DejaVu Sans", "Noto Sans", sans-serif; fill: var(--ink); }}
svg .tick {{ font-size: 9px; fill: var(--slate); }}
svg .legend, svg .label {{ font-size: 10px; }}
.cautions {{ border: 1pt solid var(--ink); padding: 2mm 4mm; margin-top: 7mm; }}
.cautions h2 {{ border: 0; margin-top: 2mm; }}
.cautions li {{ margin: 1mm 0; }}
footer {{ margin-top: 6mm; color: var(--slate); font-size: 8pt; }}
@page {{ size: {size}; margin: 16mm 12mm 16mm;
  @top-left {{ content: {title}; font: 7.5pt "DejaVu Sans", "Noto Sans", sans-serif;
              color: {slate}; }}
  @top-right {{ content: {period}; font: 7.5pt "DejaVu Sans", "Noto Sans", sans-serif;
               color: {slate}; }}
  @bottom-center {{ content: "page " counter(page) " of " counter(pages);
                   font: 7.5pt "DejaVu Sans", "Noto Sans", sans-serif; color: {slate}; }}
}}
@media print {{
  html, body {{ background: #fff; }}
  body {{ padding: 0; max-width: none; }}
  svg.chart {{ background: #fff; }}
  h2 {{ break-after: avoid-page; }}
}}
)",
                     fmt::arg("ink", kInk), fmt::arg("slate", kSlate), fmt::arg("rule", kRule),
                     fmt::arg("copper", kCopper), fmt::arg("sage", kSage),
                     fmt::arg("paper", kPaper), fmt::arg("size", css_page_size(paper)),
                     fmt::arg("title", title), fmt::arg("period", period));
}

}  // namespace

std::string statement_html(const Statement& s, Paper paper) {
  const auto sections = statement_sections(s);
  auto find = [&](const char* key) -> const Section& {
    return *std::find_if(sections.begin(), sections.end(),
                         [&](const Section& sec) { return sec.key == key; });
  };
  const std::string title = fmt::format("Statement {} \u2014 {}", s.year, s.scope);
  std::string out = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n";
  out += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
  out +=
      "<title>" + esc(title) + "</title>\n<style>" +
      css(paper, css_string(title), css_string(fmt::format("{} to {}", s.from.str(), s.to.str()))) +
      "</style>\n</head>\n<body>\n";
  out += "<header>\n<div class=\"mark\">keel \u00b7 year-end statement</div>\n";
  out += "<h1>" + esc(title) + "</h1>\n";
  out += fmt::format(
      "<p class=\"meta\">{} to {} ({}) \u00b7 amounts in {}{}{}</p>\n", s.from.str(), s.to.str(),
      s.partial_year ? "the year so far" : "the whole year",
      esc(s.currency.empty() ? "the ledger's currency" : s.currency),
      s.benchmark ? " \u00b7 benchmark " + esc(*s.benchmark) : std::string(),
      s.started_in_year ? " \u00b7 the ledger starts on " + s.inception.str() : std::string());
  out +=
      "<p class=\"brief\">For your own records: not a tax form and not advice. Past performance "
      "does not predict future results. See the notes at the end.</p>\n</header>\n";

  out += "<section>\n<h2>" + esc(find("summary").title) + "</h2>\n" + table_html(find("summary")) +
         "</section>\n";
  out += "<section>\n<h2>" + esc(find("performance").title) + "</h2>\n" +
         table_html(find("performance"));
  out += "<figure>\n" + growth_chart(s) +
         "<figcaption>Growth of the portfolio (time-weighted, copper)" +
         (s.benchmark ? " and of " + esc(*s.benchmark) + " (sage, dashed)" : std::string()) +
         " since the close of " + s.from.plus_days(-1).str() + ".</figcaption>\n</figure>\n";
  out += "</section>\n";
  out += "<section>\n<h2>" + esc(find("monthly").title) + "</h2>\n<figure>\n" + monthly_chart(s) +
         "<figcaption>Each month's time-weighted return" +
         (s.benchmark ? ", portfolio (copper) beside " + esc(*s.benchmark) + " (sage)"
                      : std::string()) +
         ".</figcaption>\n</figure>\n" + table_html(find("monthly")) + "</section>\n";
  out += "<section>\n<h2>" + esc_dates_whole(find("holdings").title) + "</h2>\n" +
         table_html(find("holdings"));
  out += "<figure>\n" + allocation_chart(s) +
         "<figcaption>Allocation by security and cash: each one's share of the closing value "
         "and its value."
         "</figcaption>\n</figure>\n</section>\n";
  out += "<section>\n<h2>" + esc(find("realized").title) + "</h2>\n" +
         table_html(find("realized")) + "</section>\n";
  out += "<section>\n<h2>" + esc(find("income").title) + "</h2>\n" + table_html(find("income")) +
         "</section>\n";
  // The sections a statement shows only when it has their rows.
  for (const auto& sec : sections)
    if (sec.key == "realized_currency" || sec.key == "income_converted" ||
        sec.key == "currency_gains" || sec.key == "withholding" || sec.key == "not_taxable")
      out += "<section>\n<h2>" + esc(sec.title) + "</h2>\n" + table_html(sec) + "</section>\n";
  out += "<section class=\"cautions\">\n<h2>" + esc(find("cautions").title) + "</h2>\n<ul>\n";
  for (const auto& c : s.cautions) out += "<li>" + esc(c) + "</li>\n";
  out += "</ul>\n</section>\n";
  out += fmt::format(
      "<footer>Prepared by keel from the ledger as of {}. Figures are exact ledger amounts shown "
      "to the cent; returns are computed as described in keel's methods notes.</footer>\n",
      s.as_of.str());
  out += "</body>\n</html>\n";
  return out;
}

}  // namespace keel::report
