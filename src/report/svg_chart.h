// SVG charts for keel's research pages (back-test, comparison, signal check,
// sweep): pure functions from plain data to one <svg> element as text.
//
// Contract
//  - Every chart has a title (also its aria-label), axis titles with their
//    units, a legend naming every series, and tick labels; a time axis shows
//    dates (years, or months for a span under two years). No scripts, no
//    links, no external resources: the element can be pasted into any page.
//    Every piece of text is escaped (report/html.h).
//  - Colours come from keel's palette (Ink): each colour means one thing on
//    every page (docs/research-reports.md). No chart relies on colour alone:
//    each series of a line chart also has its own dash pattern and marker
//    (series style 0, 1, 2, ...), marker shapes sit on the bars of a bar
//    chart, the cells of a heat grid carry their value, and every line is
//    labelled at its end with its label and last value.
//  - Values are doubles in the unit of `format`: fractions for percent (0.05
//    is written 5.0%), amounts for money (grouped, no places), plain numbers
//    for count and ratio. A log scale needs positive values; points that are
//    not positive or not finite are left out of every chart.
//  - A chart with nothing to draw still has its title and says "no data".
//  - Coordinates are written with one decimal place, so the output of a given
//    input is the same on every machine. Nothing here throws but
//    std::bad_alloc.
#pragma once

#include <array>
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"

namespace keel::report::svg {

enum class Ink {
  rule,        // the rule under test (the first rule of a comparison)
  other_rule,  // every other rule of a comparison
  baseline,    // the equal-weight baseline
  benchmark,   // the benchmark
  gain,        // a figure above zero where sign is the point
  loss,        // a figure below zero where sign is the point
  band,        // an uncertainty band (+/- 2 standard errors)
  variant,     // one variant of a sweep
};

struct PaletteEntry {
  Ink ink;
  const char* name;  // as the docs name it
  const char* hex;   // "#rrggbb"
  const char* means;
};
// Every colour keel's charts use, in the order the docs list them.
const std::vector<PaletteEntry>& palette();
const char* colour(Ink ink);

enum class Format { percent, money, count, ratio };
// A value as a chart writes it: 5.0% (one place; two below 1%), 123,457,
// 12, 0.123 (three places).
std::string format_value(double v, Format f);

struct Point {
  Date day;
  double value = 0;
};

struct Line {
  std::string label;
  Ink ink = Ink::rule;
  int style = 0;  // dash pattern and marker: 0 solid with circles, 1 dashed with squares, ...
  std::vector<Point> points;
};

struct LineChart {
  std::string title, x_title, y_title;
  Format format = Format::percent;
  bool log_scale = false;
  bool zero_line = true;  // a darker rule at 0 when it is in range (linear scale)
  std::vector<Line> lines;
};
std::string line_chart(const LineChart& c);

struct Bars {
  std::string label;
  Ink ink = Ink::rule;
  int style = 0;
  std::vector<std::optional<double>> values;  // one per category
  // Optional whiskers (low, high) per category: drawn in the band colour.
  std::vector<std::optional<std::array<double, 2>>> ranges;
};

struct BarChart {
  std::string title, x_title, y_title;
  Format format = Format::percent;
  std::vector<std::string> categories;
  std::vector<Bars> series;
  // Each bar in gain or loss by its sign instead of its series' colour (one
  // series only; the legend then names gain and loss).
  bool by_sign = false;
  std::string range_label;  // legend text of the whiskers, when any
};
std::string bar_chart(const BarChart& c);

// `values` counted into `bins` bins of equal width from their least to their
// greatest (the last bin closed), as a one-series bar chart whose categories
// are the bins' lower edges.
BarChart histogram(std::string title, std::string x_title, const std::vector<double>& values,
                   int bins, Format format, std::string label, Ink ink);

struct HeatGrid {
  std::string title;
  Format format = Format::percent;
  std::vector<int> years;                                    // one row each
  std::vector<std::array<std::optional<double>, 12>> cells;  // per row, January first
};
// Years down, months across; each cell in gain or loss, stronger the further
// from zero (against the largest size in the grid), with its value written
// in it. Empty cells stay blank.
std::string heat_grid(const HeatGrid& g);

struct ScatterPoint {
  double x = 0, y = 0;
};
struct Scatter {
  std::string title, x_title, y_title;
  Format format = Format::ratio;
  std::vector<ScatterPoint> points;
  std::string points_label;
  std::optional<std::size_t> highlight;  // drawn in the rule's colour, labelled
  std::string highlight_label;
  bool diagonal = true;  // the line y = x
};
std::string scatter(const Scatter& s);

}  // namespace keel::report::svg
