#include "report/research_html.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>

#include "perf/relative.h"
#include "report/backtest_forms.h"
#include "report/compare_forms.h"
#include "report/html.h"
#include "report/svg_chart.h"
#include "report/sweep_forms.h"

namespace keel::report {
namespace {

using svg::Format;
using svg::Ink;

std::string esc(const std::string& s) {
  return html_escape(s);
}

std::string css() {
  std::string palette;
  for (const auto& e : svg::palette()) palette += fmt::format(" --{}: {};", e.name, e.hex);
  return fmt::format(R"(
:root {{{palette} --ink: #1d2a33; --grid: #d9d2c5; --paper: #fbf8f2; }}
* {{ box-sizing: border-box; }}
html {{ background: var(--paper); }}
body {{ margin: 0 auto; max-width: 200mm; padding: 10mm 4mm 14mm; color: var(--ink);
       font: 10pt/1.45 "DejaVu Sans", "Noto Sans", "Liberation Sans", sans-serif; }}
header {{ border-bottom: 2.5pt solid var(--ink); padding-bottom: 3mm; margin-bottom: 5mm; }}
.mark {{ font: 600 8pt/1 "DejaVu Sans Mono", "Liberation Mono", monospace; letter-spacing: .28em;
        text-transform: uppercase; color: var(--copper); }}
h1 {{ font: 600 19pt/1.15 "DejaVu Serif", "Noto Serif", "Liberation Serif", serif; margin: 2mm 0 1mm; }}
h2 {{ font: 600 12pt/1.2 "DejaVu Serif", "Noto Serif", "Liberation Serif", serif;
     margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: .6pt solid var(--grid);
     break-after: avoid; page-break-after: avoid; }}
.meta {{ margin: 0; }}
.brief {{ margin: 3mm 0 0; padding: 2mm 3mm; border-left: 3pt solid var(--copper);
         background: #f3ede2; font-size: 9pt; }}
pre.figures {{ font: 6.9pt/1.35 "DejaVu Sans Mono", "Liberation Mono", monospace;
              background: #fffdf9; border: .5pt solid var(--grid); padding: 2mm 3mm;
              white-space: pre; overflow-x: auto; break-inside: avoid; page-break-inside: avoid; }}
figure {{ margin: 2mm 0 4mm; break-inside: avoid; page-break-inside: avoid; }}
figcaption {{ font-size: 8.5pt; margin-top: 1mm; }}
svg.chart {{ width: 100%; height: auto; display: block; border: .5pt solid var(--grid); }}
svg text {{ font-family: "DejaVu Sans", "Noto Sans", sans-serif; }}
.key {{ font-size: 11pt; }}
.cautions {{ border: 1pt solid var(--ink); padding: 2mm 4mm; margin-top: 7mm;
            break-inside: avoid; page-break-inside: avoid; }}
.cautions h2 {{ border: 0; margin-top: 2mm; }}
.cautions li, .notes li {{ margin: 1mm 0; }}
footer {{ margin-top: 6mm; font-size: 8pt; }}
@page {{ size: A4; margin: 14mm 12mm; }}
@media print {{
  html, body {{ background: #fff; }}
  body {{ padding: 0; max-width: none; }}
  pre.figures {{ font-size: 6.3pt; white-space: pre-wrap; overflow: visible; }}
  section {{ break-before: auto; }}
}}
)",
                     fmt::arg("palette", palette));
}

// The page around `body`: header with `mark`, title and meta line, then
// the notes and cautions.
std::string page(const std::string& mark, const std::string& title, const std::string& meta,
                 const std::string& body, const std::vector<std::string>& notes,
                 const std::vector<std::string>& cautions) {
  std::string out = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n";
  out += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
  out += "<title>" + esc(title) + "</title>\n<style>" + css() + "</style>\n</head>\n<body>\n";
  out += "<header>\n<div class=\"mark\">keel \u00b7 " + esc(mark) + "</div>\n";
  out += "<h1>" + esc(title) + "</h1>\n<p class=\"meta\">" + esc(meta) + "</p>\n";
  out +=
      "<p class=\"brief\">The output of your own rule on your own data: not investment advice. "
      "Past results do not predict future ones, and back-tests flatter the rules they test. "
      "See the cautions at the end.</p>\n</header>\n";
  out += body;
  if (!notes.empty()) {
    out += "<section class=\"notes\">\n<h2>Notes</h2>\n<ul>\n";
    for (const auto& n : notes) out += "<li>" + esc(n) + "</li>\n";
    out += "</ul>\n</section>\n";
  }
  out += "<section class=\"cautions\">\n<h2>Cautions</h2>\n<ul>\n";
  for (const auto& c : cautions) out += "<li>" + esc(c) + "</li>\n";
  out += "</ul>\n</section>\n";
  out +=
      "<footer>Prepared by keel. Colours: docs/research-reports.md; methods: docs/backtest.md, "
      "docs/compare.md, docs/methods-overfit.md.</footer>\n</body>\n</html>\n";
  return out;
}

std::string section(const std::string& title, const std::string& content) {
  return "<section>\n<h2>" + esc(title) + "</h2>\n" + content + "</section>\n";
}

// Text of a report's table, exactly as the terminal shows it without colour.
std::string figures(const std::string& text) {
  std::string t = text;
  while (!t.empty() && t.front() == '\n') t.erase(t.begin());
  return "<pre class=\"figures\">" + esc(t) + "</pre>\n";
}

std::string figure(const std::string& chart, const std::string& caption) {
  return "<figure>\n" + chart + "<figcaption>" + esc(caption) + "</figcaption>\n</figure>\n";
}

double to_d(const Decimal& d) {
  return d.to_double();
}

// A run's value on each day of its curve.
svg::Line value_line(const std::string& label, Ink ink, int style,
                     const backtest::StrategyRun& run) {
  svg::Line l{label, ink, style, {}};
  for (const auto& c : run.curve) l.points.push_back({c.day, to_d(c.value)});
  return l;
}

// The benchmark's level rebased to `start` on the first day it has one.
std::optional<svg::Line> benchmark_line(const std::string& label,
                                        const std::vector<backtest::CurvePoint>& days,
                                        const std::vector<std::optional<Decimal>>& levels,
                                        double start) {
  svg::Line l{label, Ink::benchmark, 1, {}};
  std::optional<double> base;
  for (std::size_t i = 0; i < days.size() && i < levels.size(); ++i) {
    if (!levels[i]) continue;
    if (!base) base = to_d(*levels[i]);
    if (*base > 0) l.points.push_back({days[i].day, start * to_d(*levels[i]) / *base});
  }
  if (l.points.empty()) return std::nullopt;
  return l;
}

// A value line as the fall below its running peak (0 at a new peak).
svg::Line underwater(svg::Line value) {
  double peak = 0;
  for (auto& p : value.points) {
    peak = std::max(peak, p.value);
    p.value = peak > 0 ? p.value / peak - 1 : 0;
  }
  return value;
}

std::string value_chart(const std::string& title, const std::vector<svg::Line>& lines,
                        const std::string& currency_note) {
  svg::LineChart c;
  c.title = title;
  c.x_title = "date";
  c.y_title = "value" + currency_note + ", log scale";
  c.format = Format::money;
  c.log_scale = true;
  c.lines = lines;
  return svg::line_chart(c);
}

std::string drawdown_chart(const std::vector<svg::Line>& values) {
  svg::LineChart c;
  c.title = "Drawdown: the fall below each one's running peak";
  c.x_title = "date";
  c.y_title = "below the peak (%)";
  for (const auto& l : values) c.lines.push_back(underwater(l));
  return svg::line_chart(c);
}

// The H-month compounded return of a run's complete months, by the last day
// of each window; and the same for the benchmark.
std::vector<svg::Point> rolling_points(const perf::PerfResult& perf,
                                       const std::vector<std::optional<double>>& months,
                                       const std::vector<std::optional<double>>& against, int h) {
  std::vector<svg::Point> out;
  const auto a = perf::window_returns(months, h);
  const auto b = perf::window_returns(against, h);
  for (std::size_t i = 0; i < a.size() && i < b.size(); ++i)
    if (a[i] && b[i])
      out.push_back({perf.months[i + static_cast<std::size_t>(h) - 1].last, *a[i] - *b[i]});
  return out;
}

std::string monthly_grid(const std::string& title, const perf::PerfResult& perf) {
  svg::HeatGrid g;
  g.title = title;
  for (const auto& m : perf.months) {
    if (g.years.empty() || g.years.back() != m.year) {
      g.years.push_back(m.year);
      g.cells.push_back({});
    }
    if (m.complete) g.cells.back()[static_cast<std::size_t>(m.month - 1)] = m.twr;
  }
  return svg::heat_grid(g);
}

svg::Line names_line(const std::string& label, Ink ink, int style,
                     const backtest::StrategyRun& run) {
  svg::Line l{label, ink, style, {}};
  for (const auto& d : run.rebalances)
    l.points.push_back({d.day, static_cast<double>(d.names_after)});
  return l;
}

svg::Line turnover_line(const std::string& label, Ink ink, int style,
                        const backtest::StrategyRun& run) {
  svg::Line l{label, ink, style, {}};
  for (const auto& d : run.rebalances)
    if (d.value_before.is_positive())
      l.points.push_back({d.day, to_d(d.traded) / to_d(d.value_before)});
  return l;
}

std::string mode_text(bool frictionless) {
  return frictionless ? "frictionless: no fees, fractional units, fully invested"
                      : "the rule's fees, bands and lot sizes";
}

}  // namespace

std::string backtest_html(const backtest::Result& r) {
  const std::string title = fmt::format("Back-test of rule '{}'", r.rule_name);
  const std::string meta = fmt::format(
      "{} to {} ({}) \u00b7 start value {} \u00b7 {} rebalancing days{}", r.from.str(), r.to.str(),
      mode_text(r.frictionless), r.start_value.fixed(2), r.rebalance_days.size(),
      r.benchmark ? " \u00b7 benchmark " + *r.benchmark : std::string());
  const double start = to_d(r.start_value);
  std::string body;

  std::string fig =
      figures(figures_table({{"rule", &r.rule}, {"baseline", &r.baseline}}, r.benchmark, Style{}));
  if (!r.rolling.empty()) fig += figures(rolling_text(r));
  body += section("Figures", fig);

  std::vector<svg::Line> values{value_line("rule", Ink::rule, 0, r.rule),
                                value_line("baseline", Ink::baseline, 2, r.baseline)};
  if (r.benchmark)
    if (auto b =
            benchmark_line("benchmark " + *r.benchmark, r.rule.curve, r.benchmark_curve, start))
      values.push_back(std::move(*b));
  body += section(
      "Value",
      figure(
          value_chart("Value of the rule, the equal-weight baseline and the benchmark", values, ""),
          "Each pool's value every day with a close, on a log scale so that equal growth "
          "rates look equally steep; the benchmark's closes are rebased to the start "
          "value.") +
          figure(drawdown_chart(values),
                 "How far each one stood below its own highest value so far."));

  const int h = r.rolling.empty() ? 12 : r.rolling.front().months;
  {
    svg::LineChart c;
    const bool bench = r.benchmark.has_value() && !r.benchmark_curve.empty();
    c.title = fmt::format("Rolling {}-month excess of the rule over the {}", h,
                          bench ? "benchmark" : "baseline");
    c.x_title = "last day of the window";
    c.y_title = "excess return (%)";
    const auto months = backtest::monthly_returns(r.rule);
    if (bench) {
      c.lines.push_back(
          {"rule less benchmark", Ink::benchmark, 1,
           rolling_points(r.rule.perf, months, backtest::benchmark_monthly_returns(r.rule), h)});
      c.lines.push_back(
          {"rule less baseline", Ink::baseline, 2,
           rolling_points(r.rule.perf, months, backtest::monthly_returns(r.baseline), h)});
    } else {
      c.lines.push_back(
          {"rule less baseline", Ink::baseline, 2,
           rolling_points(r.rule.perf, months, backtest::monthly_returns(r.baseline), h)});
    }
    body += section(
        "Rolling excess",
        figure(svg::line_chart(c),
               fmt::format("The rule's compounded return over each {} complete months less the "
                           "other's over the same months, plotted at the window's end; above "
                           "zero the rule was ahead.",
                           h)));
  }
  body += section("Monthly returns",
                  figure(monthly_grid("The rule's return in each complete month", r.rule.perf),
                         "Time-weighted return of each complete calendar month; part months at "
                         "the ends are left blank."));
  {
    svg::LineChart names;
    names.title = "Names held after each rebalancing day";
    names.x_title = "rebalancing day";
    names.y_title = "securities held";
    names.format = Format::count;
    names.zero_line = false;
    names.lines = {names_line("rule", Ink::rule, 0, r.rule),
                   names_line("baseline", Ink::baseline, 2, r.baseline)};
    svg::LineChart turn;
    turn.title = "Turnover on each rebalancing day";
    turn.x_title = "rebalancing day";
    turn.y_title = "bought + sold over value (%)";
    turn.lines = {turnover_line("rule", Ink::rule, 0, r.rule),
                  turnover_line("baseline", Ink::baseline, 2, r.baseline)};
    body += section("Names and turnover",
                    figure(svg::line_chart(names), "Securities held after trading.") +
                        figure(svg::line_chart(turn),
                               "Value bought plus value sold at the fills, over the pool's value "
                               "before trading."));
  }
  if (r.down_markets)
    body += section("Down markets", figures(down_markets_text(*r.down_markets, Style{})));
  return page("back-test", title, meta, body, r.notes, r.cautions);
}

// A comparison's series k: its colour and style (rules first, then the
// baseline, then the benchmark; styles 0..4 each at most once where it can).
struct SeriesLook {
  Ink ink;
  int style;
};
SeriesLook compare_look(const backtest::CompareResult& r, std::size_t k) {
  const std::size_t rules = r.runs.size();
  if (k == 0) return {Ink::rule, 0};
  if (k < rules) return {Ink::other_rule, k == 1 ? 3 : k == 2 ? 4 : static_cast<int>(k) + 2};
  if (k == rules) return {Ink::baseline, 2};
  return {Ink::benchmark, 1};
}

std::string compare_html(const backtest::CompareResult& r) {
  const std::string title = fmt::format("Comparison of {} rules", r.runs.size());
  const std::string meta = fmt::format(
      "{} to {} ({}) \u00b7 start value {} \u00b7 held {} months from the start of any month{}",
      r.from.str(), r.to.str(), mode_text(r.frictionless), r.start_value.fixed(2), r.hold_months,
      r.benchmark ? " \u00b7 benchmark " + *r.benchmark : std::string());
  const double start = to_d(r.start_value);
  std::vector<std::pair<std::string, const backtest::StrategyRun*>> runs;
  for (std::size_t i = 0; i < r.runs.size(); ++i) runs.emplace_back(r.labels[i], &r.runs[i].rule);
  runs.emplace_back("baseline", &r.runs.front().baseline);

  std::string body = section("Figures", figures(figures_table(runs, r.benchmark, Style{})));

  std::vector<svg::Line> values;
  for (std::size_t i = 0; i < runs.size(); ++i) {
    const auto look = compare_look(r, i);
    values.push_back(value_line(runs[i].first, look.ink, look.style, *runs[i].second));
  }
  if (r.benchmark)
    if (auto b = benchmark_line("benchmark " + *r.benchmark, r.runs.front().rule.curve,
                                r.runs.front().benchmark_curve, start))
      values.push_back(std::move(*b));
  body +=
      section("Value",
              figure(value_chart("Value of every rule, the baseline and the benchmark", values, ""),
                     "Each pool's value every day with a close, on a log scale; the "
                     "benchmark's closes are rebased to the start value."));

  if (!r.starts.empty()) {
    // Excess over the benchmark, else the baseline: the last series.
    const std::size_t against = r.series.size() - 1;
    const std::string other = r.series[against];
    std::string content;
    const auto& first = r.returns.front();
    std::vector<double> excess;
    for (std::size_t k = 0; k < r.starts.size(); ++k)
      excess.push_back(first[k] - r.returns[against][k]);
    content += figure(
        svg::bar_chart(
            svg::histogram(fmt::format("How often '{}' was ahead of the {}, held {} months",
                                       r.labels.front(), other, r.hold_months),
                           fmt::format("excess over the {} from the bin's lower edge (%)", other),
                           excess, 12, Format::percent, "start months", Ink::rule)),
        fmt::format("The excess of each start month's {}-month return over the {}'s: how many "
                    "start months fall in each band. Right of zero the rule was ahead.",
                    r.hold_months, other));
    // Series k's return from each start month, less series `less`'s when given.
    auto by_start = [&](std::size_t k, std::optional<std::size_t> less) {
      const auto look = compare_look(r, k);
      svg::Line l{r.series[k], look.ink, look.style, {}};
      for (std::size_t j = 0; j < r.starts.size(); ++j)
        l.points.push_back({r.starts[j], r.returns[k][j] - (less ? r.returns[*less][j] : 0.0)});
      return l;
    };
    svg::LineChart ex;
    ex.title =
        fmt::format("Excess over the {} by start month, held {} months", other, r.hold_months);
    ex.x_title = "start month";
    ex.y_title = "excess return (%)";
    for (std::size_t i = 0; i < r.runs.size(); ++i) ex.lines.push_back(by_start(i, against));
    content += figure(svg::line_chart(ex),
                      "Each rule's return over the holding period from the start of each month, "
                      "less the other's over the same months.");
    svg::LineChart held;
    held.title = fmt::format("Return held {} months, by start month", r.hold_months);
    held.x_title = "start month";
    held.y_title = "compounded return (%)";
    for (std::size_t k = 0; k < r.series.size(); ++k)
      held.lines.push_back(by_start(k, std::nullopt));
    content += figure(svg::line_chart(held),
                      "Each series' compounded return over the holding period from the start of "
                      "each month.");
    content += figures(starts_table(r, Style{}, true) + pairings_text(r, Style{}));
    body +=
        section(fmt::format("Held {} months from the start of any month", r.hold_months), content);
  }
  if (r.down_markets) {
    const auto& d = *r.down_markets;
    svg::BarChart c;
    c.title = fmt::format("Mean return when the benchmark {} fell or rose", d.benchmark);
    c.x_title = "state of the market";
    c.y_title = "mean return (%)";
    c.categories = {"months it fell", "months it rose",
                    fmt::format("{}-month windows it fell", d.window_months),
                    fmt::format("{}-month windows it rose", d.window_months)};
    for (std::size_t i = 0; i < d.runs.size(); ++i) {
      const auto& run = d.runs[i];
      const auto look = compare_look(r, i);
      c.series.push_back({run.label,
                          look.ink,
                          look.style,
                          {run.months.fell.mean, run.months.rose.mean, run.windows.fell.mean,
                           run.windows.rose.mean},
                          {}});
    }
    if (!d.runs.empty()) {
      const auto& b = d.runs.front();
      c.series.push_back({"benchmark " + d.benchmark,
                          Ink::benchmark,
                          1,
                          {b.months.fell.benchmark_mean, b.months.rose.benchmark_mean,
                           b.windows.fell.benchmark_mean, b.windows.rose.benchmark_mean},
                          {}});
    }
    body += section("Down markets",
                    figure(svg::bar_chart(c),
                           "Arithmetic mean return of each one over the complete months and the "
                           "windows in which the benchmark fell (returned less than zero) or "
                           "rose.") +
                        figures(down_markets_text(d, Style{})));
  }
  return page("comparison of rules", title, meta, body, r.notes, r.cautions);
}

std::string months_text(int m) {
  return fmt::format("{} month{}", m, m == 1 ? "" : "s");
}

std::string signal_html(const backtest::SignalResult& r) {
  const std::string title = fmt::format("Signal check of rule '{}'", r.rule_name);
  std::string horizons;
  for (const auto& h : r.horizons)
    horizons += (horizons.empty() ? "" : ", ") + std::to_string(h.months);
  const std::string meta = fmt::format("{} to {} \u00b7 forward windows of {} months", r.from.str(),
                                       r.to.str(), horizons);
  std::string body = section("Figures", figures(signal_figures_text(r, Style{})));
  svg::BarChart ic;
  ic.title = "Mean information coefficient by forward window";
  ic.x_title = "forward window";
  ic.y_title = "mean IC (Spearman, low z is cheap)";
  ic.format = Format::ratio;
  ic.range_label = "mean IC plus and minus two standard errors";
  svg::Bars bars{"mean IC", Ink::rule, 0, {}, {}};
  for (const auto& h : r.horizons) {
    ic.categories.push_back(months_text(h.months));
    bars.values.push_back(h.mean_ic);
    if (h.mean_ic && h.ic_standard_error)
      bars.ranges.push_back(std::array<double, 2>{*h.mean_ic - 2 * *h.ic_standard_error,
                                                  *h.mean_ic + 2 * *h.ic_standard_error});
    else
      bars.ranges.push_back(std::nullopt);
  }
  ic.series.push_back(std::move(bars));
  body += section(
      "Information coefficient",
      figure(svg::bar_chart(ic),
             "Each day's Spearman rank correlation of z with the forward total return, averaged "
             "over the days; the whiskers reach two standard errors (sample sd over the square "
             "root of the days) either side. Below zero the cheap names did better. Windows "
             "longer than the rebalancing step overlap, so the whiskers are too narrow there."));
  std::string quint;
  for (const auto& h : r.horizons) {
    svg::BarChart c;
    c.title = fmt::format("Mean {} forward return of each fifth of the names by z",
                          months_text(h.months));
    c.x_title = "fifth of the names by z (1: cheapest)";
    c.y_title = "mean forward return (%)";
    c.categories = {"1 (cheapest)", "2", "3", "4", "5 (dearest)"};
    c.by_sign = true;
    c.series.push_back(
        {"mean return",
         Ink::rule,
         0,
         std::vector<std::optional<double>>(h.quintile_means.begin(), h.quintile_means.end()),
         {}});
    quint += figure(svg::bar_chart(c),
                    fmt::format("The names of each day in z order split into fifths (name i of n "
                                "in fifth floor(5 i / n) + 1); each fifth's mean {} total return, "
                                "averaged over the days.",
                                months_text(h.months)));
  }
  body += section("Returns by score quintile", quint);
  return page("signal check", title, meta, body, r.notes, r.cautions);
}

std::string sweep_html(const backtest::SweepResult& r) {
  const std::string title = fmt::format("Sweep of rule '{}'", r.rule_name);
  const std::string meta =
      fmt::format("{} to {} ({}) \u00b7 start value {}", r.from.str(), r.to.str(),
                  r.frictionless ? "frictionless" : "the rule's fees, bands and lot sizes",
                  r.start_value.fixed(2));
  std::string body = fmt::format(
      "<p class=\"key\"><strong>{} variant{} tried</strong>, each over the same {} month{} of "
      "history. The more variants are tried, the more the best of them owes to luck.</p>\n",
      r.variants.size(), r.variants.size() == 1 ? "" : "s", r.months.size(),
      r.months.size() == 1 ? "" : "s");
  const auto halves = backtest::half_sharpes(r);
  svg::Scatter sc;
  const std::size_t half = r.months.size() / 2;
  sc.title = "In sample against out of sample: every variant's Sharpe ratio";
  sc.x_title = r.months.empty()
                   ? std::string("first half")
                   : fmt::format("Sharpe ratio (annualized), first {} months ({} to {})", half,
                                 r.months.front(), half ? r.months[half - 1] : r.months.front());
  sc.y_title = r.months.empty() ? std::string("second half")
                                : fmt::format("Sharpe ratio (annualized), last {} months",
                                              r.months.size() - half);
  sc.points_label = "a variant";
  std::optional<std::size_t> best_point;
  for (std::size_t i = 0; i < halves.size(); ++i) {
    if (!halves[i].first || !halves[i].second) continue;
    if (r.best && *r.best == i) best_point = sc.points.size();
    sc.points.push_back({*halves[i].first * std::sqrt(12.0), *halves[i].second * std::sqrt(12.0)});
  }
  if (best_point) {
    sc.highlight = best_point;
    sc.highlight_label = fmt::format("#{}, best over the whole period", *r.best + 1);
  }
  body += section(
      "In sample and out of sample",
      figure(svg::scatter(sc),
             "Each variant's Sharpe ratio of its monthly returns in the first half of the months "
             "against the second half. Variants that were good in the first half and stayed good "
             "lie along the diagonal; a cloud with no slope says the ranking did not last."));
  body += section("Figures and the odds that the best is luck",
                  figures(sweep_figures_text(r, Style{})));
  if (r.walk_forward && !r.walk_forward->windows.empty()) {
    svg::BarChart c;
    c.title = "Walk-forward: the chosen variant's return in each window out of sample";
    c.x_title = "first day out of sample";
    c.y_title = "return out of sample (%)";
    c.by_sign = true;
    svg::Bars b{"return out of sample", Ink::rule, 0, {}, {}};
    for (const auto& w : r.walk_forward->windows) {
      c.categories.push_back(w.out_from.str());
      b.values.push_back(w.out_return);
    }
    c.series.push_back(std::move(b));
    body += section("Walk-forward",
                    figure(svg::bar_chart(c),
                           "On each in-sample window the variant with the highest Sharpe ratio is "
                           "chosen and run alone on the next window."));
  }
  return page("sweep", title, meta, body, r.notes, r.cautions);
}

}  // namespace keel::report
