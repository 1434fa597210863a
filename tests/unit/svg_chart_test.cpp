// SVG charts of the research pages: exact output on tiny inputs.
#include "report/svg_chart.h"

#include <doctest/doctest.h>
#include <fmt/format.h>

#include <fstream>
#include <iterator>
#include <set>
#include <string>

using namespace keel;
using namespace keel::report::svg;

namespace {

Date d(const char* text) {
  return Date::parse(text);
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

}  // namespace

TEST_CASE("svg chart: values are written in the chart's unit") {
  CHECK(format_value(0.1234, Format::percent) == "12.3%");
  CHECK(format_value(0, Format::percent) == "0%");
  CHECK(format_value(-0.0042, Format::percent) == "-0.42%");
  CHECK(format_value(-0.00001, Format::percent) == "0.00%");
  CHECK(format_value(1234567.4, Format::money) == "1,234,567");
  CHECK(format_value(-999.6, Format::money) == "-1,000");
  CHECK(format_value(11, Format::count) == "11");
  CHECK(format_value(-0.0001, Format::ratio) == "0.000");
}

TEST_CASE("svg chart: each palette colour means one thing") {
  std::set<std::string> hexes, meanings;
  for (const auto& e : palette()) {
    hexes.insert(e.hex);
    meanings.insert(e.means);
    CHECK(std::string(colour(e.ink)) == e.hex);
  }
  CHECK(hexes.size() == palette().size());
  CHECK(meanings.size() == palette().size());
}

LineChart two_points() {
  LineChart c;
  c.title = "Value";
  c.x_title = "date";
  c.y_title = "value (USD)";
  c.format = Format::money;
  c.lines.push_back({"rule", Ink::rule, 0, {{d("2025-01-01"), 100}, {d("2025-03-01"), 150}}});
  return c;
}

TEST_CASE("svg chart: the palette table of docs/research-reports.md lists every colour") {
  std::ifstream f(KEEL_SOURCE_DIR "/docs/research-reports.md");
  const std::string doc((std::istreambuf_iterator<char>(f)), std::istreambuf_iterator<char>());
  REQUIRE(!doc.empty());
  for (const auto& e : palette())
    CHECK(count(doc, fmt::format("| {} | `{}` | {} |", e.name, e.hex, e.means)) == 1);
}

TEST_CASE("svg chart: a line chart of two points, exactly") {
  CHECK(
      line_chart(two_points()) ==
      R"svg(<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 720.0 300.0" role="img" aria-label="Value" class="chart">
<rect x="0" y="0" width="720.0" height="300.0" fill="#fffdf9"/>
<text x="16.0" y="20" class="title" font-size="13" font-weight="600" fill="#1d2a33">Value</text>
<text x="323.0" y="292.0" text-anchor="middle" class="axis-title" font-size="10" fill="#1d2a33">date</text>
<text x="14" y="155.0" text-anchor="middle" class="axis-title" font-size="10" fill="#1d2a33" transform="rotate(-90 14 155.0)">value (USD)</text>
<line x1="16.0" y1="36.5" x2="38.0" y2="36.5" stroke="#b5562b" stroke-width="2"/>
<circle cx="27.0" cy="36.5" r="3.2" fill="#b5562b" stroke="#fff" stroke-width="0.8"/>
<text x="43.0" y="40.0" class="legend" font-size="10" fill="#1d2a33">rule</text>
<line x1="76.0" y1="241.6" x2="570.0" y2="241.6" stroke="#d9d2c5" stroke-width="0.6"/>
<text x="70.0" y="245.1" text-anchor="end" class="tick" font-size="9" fill="#1d2a33">100</text>
<line x1="76.0" y1="172.3" x2="570.0" y2="172.3" stroke="#d9d2c5" stroke-width="0.6"/>
<text x="70.0" y="175.8" text-anchor="end" class="tick" font-size="9" fill="#1d2a33">120</text>
<line x1="76.0" y1="103.0" x2="570.0" y2="103.0" stroke="#d9d2c5" stroke-width="0.6"/>
<text x="70.0" y="106.5" text-anchor="end" class="tick" font-size="9" fill="#1d2a33">140</text>
<line x1="335.6" y1="58.0" x2="335.6" y2="256.0" stroke="#d9d2c5" stroke-width="0.6"/>
<text x="335.6" y="268.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">2025-02</text>
<line x1="570.0" y1="58.0" x2="570.0" y2="256.0" stroke="#d9d2c5" stroke-width="0.6"/>
<text x="570.0" y="268.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">2025-03</text>
<line x1="76.0" y1="58.0" x2="76.0" y2="252.0" stroke="#1d2a33" stroke-width="1"/>
<polyline fill="none" stroke="#b5562b" stroke-width="1.8" stroke-linejoin="round" points="76.0,241.6 570.0,68.4"/>
<circle cx="76.0" cy="241.6" r="3.2" fill="#b5562b" stroke="#fff" stroke-width="0.8"/>
<circle cx="570.0" cy="68.4" r="3.2" fill="#b5562b" stroke="#fff" stroke-width="0.8"/>
<text x="578.0" y="71.9" class="end-label" font-size="10" fill="#b5562b">rule 150</text>
</svg>
)svg");
}

TEST_CASE("svg chart: a log scale has its ticks at 1, 2 and 5 times a power of ten") {
  LineChart c = two_points();
  c.log_scale = true;
  c.lines[0].points = {{d("2020-01-01"), 90}, {d("2021-01-01"), 600}};
  const auto svg = line_chart(c);
  CHECK(count(svg, ">100</text>") == 1);
  CHECK(count(svg, ">200</text>") == 1);
  CHECK(count(svg, ">500</text>") == 1);
  CHECK(count(svg, ">300</text>") == 0);
}

TEST_CASE("svg chart: a log scale leaves out values that are not positive") {
  LineChart c = two_points();
  c.log_scale = true;
  c.lines[0].points.push_back({d("2025-04-01"), 0});
  CHECK(line_chart(c) == [] {
    LineChart plain = two_points();
    plain.log_scale = true;
    return line_chart(plain);
  }());
}

TEST_CASE("svg chart: lines differ by dash pattern and marker, not by colour alone") {
  LineChart c = two_points();
  c.lines.push_back(
      {"benchmark", Ink::benchmark, 1, {{d("2025-01-01"), 100}, {d("2025-03-01"), 120}}});
  const auto svg = line_chart(c);
  CHECK(count(svg, "<polyline") == 2);
  CHECK(count(svg, "stroke-dasharray=\"7 4\"") == 2);  // the line and its legend sample
  CHECK(count(svg, "<circle") == 3);                   // legend, one on the line, the end
  CHECK(count(svg, "<rect x=") == 4);                  // the ground and three squares
}

TEST_CASE("svg chart: every line is labelled at its end with its last value") {
  LineChart c = two_points();
  c.lines.push_back(
      {"baseline", Ink::baseline, 1, {{d("2025-01-01"), 100}, {d("2025-03-01"), 150}}});
  const auto svg = line_chart(c);
  CHECK(count(svg, ">rule 150</text>") == 1);
  CHECK(count(svg, ">baseline 150</text>") == 1);
}

TEST_CASE("svg chart: end labels at the same height are moved apart") {
  LineChart c = two_points();
  c.lines.push_back(
      {"baseline", Ink::baseline, 1, {{d("2025-01-01"), 100}, {d("2025-03-01"), 150}}});
  const auto svg = line_chart(c);
  CHECK(count(svg, "<text x=\"578.0\" y=\"71.9\" class=\"end-label\"") == 1);
  CHECK(count(svg, "<text x=\"578.0\" y=\"83.9\" class=\"end-label\"") == 1);
}

TEST_CASE("svg chart: a time axis over years is marked at each new year") {
  LineChart c = two_points();
  c.lines[0].points = {{d("2019-06-30"), 100}, {d("2022-02-01"), 150}};
  const auto svg = line_chart(c);
  CHECK(count(svg, ">2020</text>") == 1);
  CHECK(count(svg, ">2021</text>") == 1);
  CHECK(count(svg, ">2022</text>") == 1);
  CHECK(count(svg, ">2019</text>") == 0);
}

TEST_CASE("svg chart: a time axis under two years is marked by month") {
  const auto svg = line_chart(two_points());
  CHECK(count(svg, ">2025-02</text>") == 1);
  CHECK(count(svg, ">2025-03</text>") == 1);
  CHECK(count(svg, ">2025-01</text>") == 0);
}

TEST_CASE("svg chart: titles and labels are escaped") {
  LineChart c = two_points();
  c.title = "P/E <low> & \"cheap\"";
  c.lines[0].label = "<script>";
  const auto svg = line_chart(c);
  CHECK(count(svg, "aria-label=\"P/E &lt;low&gt; &amp; &quot;cheap&quot;\"") == 1);
  CHECK(count(svg, ">P/E &lt;low&gt; &amp; &quot;cheap&quot;</text>") == 1);
  CHECK(svg.find("<script") == std::string::npos);
}

TEST_CASE("svg chart: a chart with nothing to draw keeps its title and says so") {
  LineChart c = two_points();
  c.lines[0].points.clear();
  const auto svg = line_chart(c);
  CHECK(count(svg, ">Value</text>") == 1);
  CHECK(count(svg, ">no data</text>") == 1);
  CHECK(count(svg, "<polyline") == 0);
}

TEST_CASE("svg chart: a heat grid of one year, exactly") {
  HeatGrid g;
  g.title = "Monthly returns";
  g.years = {2025};
  g.cells.push_back({});
  g.cells[0][0] = 0.02;
  g.cells[0][1] = -0.01;
  CHECK(
      heat_grid(g) ==
      R"svg(<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 720.0 130.0" role="img" aria-label="Monthly returns" class="chart">
<rect x="0" y="0" width="720.0" height="130.0" fill="#fffdf9"/>
<text x="16.0" y="20" class="title" font-size="13" font-weight="600" fill="#1d2a33">Monthly returns</text>
<text x="388.0" y="122.0" text-anchor="middle" class="axis-title" font-size="10" fill="#1d2a33">month</text>
<text x="14" y="85.0" text-anchor="middle" class="axis-title" font-size="10" fill="#1d2a33" transform="rotate(-90 14 85.0)">year</text>
<rect x="20.0" y="32.0" width="14" height="9" fill="#1b6e68" fill-opacity="0.55"/>
<text x="43.0" y="40.0" class="legend" font-size="10" fill="#1d2a33">above zero</text>
<rect x="114.0" y="32.0" width="14" height="9" fill="#a3324f" fill-opacity="0.55"/>
<text x="137.0" y="40.0" class="legend" font-size="10" fill="#1d2a33">below zero</text>
<rect x="208.0" y="32.0" width="14" height="9" fill="#d9d2c5" fill-opacity="0.55"/>
<text x="231.0" y="40.0" class="legend" font-size="10" fill="#1d2a33">stronger: further from zero; blank: not a complete month</text>
<text x="102.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Jan</text>
<text x="154.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Feb</text>
<text x="206.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Mar</text>
<text x="258.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Apr</text>
<text x="310.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">May</text>
<text x="362.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Jun</text>
<text x="414.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Jul</text>
<text x="466.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Aug</text>
<text x="518.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Sep</text>
<text x="570.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Oct</text>
<text x="622.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Nov</text>
<text x="674.0" y="68.0" text-anchor="middle" class="tick" font-size="9" fill="#1d2a33">Dec</text>
<text x="68.0" y="88.5" text-anchor="end" class="tick" font-size="9" fill="#1d2a33">2025</text>
<rect x="77.0" y="75.0" width="50.0" height="20.0" fill="#1b6e68" fill-opacity="0.90"/>
<text x="102.0" y="88.5" text-anchor="middle" class="cell" font-size="9" fill="#ffffff">2.0%</text>
<rect x="129.0" y="75.0" width="50.0" height="20.0" fill="#a3324f" fill-opacity="0.51"/>
<text x="154.0" y="88.5" text-anchor="middle" class="cell" font-size="9" fill="#1d2a33">-1.0%</text>
<rect x="181.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="233.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="285.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="337.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="389.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="441.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="493.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="545.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="597.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
<rect x="649.0" y="75.0" width="50.0" height="20.0" fill="none" stroke="#d9d2c5" stroke-width="0.5"/>
</svg>
)svg");
}

TEST_CASE("svg chart: bars by sign are in gain above zero and loss below") {
  BarChart c;
  c.title = "Quintiles";
  c.categories = {"1", "2"};
  c.by_sign = true;
  c.series.push_back({"mean return", Ink::rule, 0, {0.01, -0.02}, {}});
  const auto svg = bar_chart(c);
  CHECK(count(svg, "fill=\"#1b6e68\"/>") == 2);  // the bar and the legend's swatch
  CHECK(count(svg, "fill=\"#a3324f\"/>") == 2);
  CHECK(count(svg, ">mean return, above zero</text>") == 1);
  CHECK(count(svg, ">-2.0%</text>") == 2);  // the bar's value and a tick
}

TEST_CASE("svg chart: bars carry their series' marker and whiskers their range") {
  BarChart c;
  c.title = "IC";
  c.categories = {"1", "3"};
  c.series.push_back({"mean IC", Ink::rule, 1, {0.1, 0.2}, {}});
  c.series[0].ranges = {std::array<double, 2>{0.05, 0.15}, std::nullopt};
  c.range_label = "two standard errors";
  const auto svg = bar_chart(c);
  // The ground, two bars and their squares, the legend's swatch and square, the band's swatch.
  CHECK(count(svg, "<rect x=") == 8);
  CHECK(count(svg, "stroke=\"#b3a78e\"") == 1);
  CHECK(count(svg, ">two standard errors</text>") == 1);
}

TEST_CASE("svg chart: a histogram counts values into equal bins, the last closed") {
  const auto c = histogram("Excess", "excess", {0.0, 0.1, 0.2, 0.3, 0.4}, 2, Format::percent,
                           "rule", Ink::rule);
  CHECK(c.categories == std::vector<std::string>{"0%", "20.0%"});
  REQUIRE(c.series.size() == 1);
  CHECK(c.series[0].values == std::vector<std::optional<double>>{2.0, 3.0});
}

TEST_CASE("svg chart: a histogram of equal values is one bin") {
  const auto c = histogram("Excess", "excess", {0.1, 0.1}, 4, Format::percent, "rule", Ink::rule);
  CHECK(c.categories == std::vector<std::string>{"10.0%"});
  CHECK(c.series[0].values == std::vector<std::optional<double>>{2.0});
}

TEST_CASE("svg chart: a scatter marks and labels the chosen point and draws y = x") {
  Scatter s;
  s.title = "In and out of sample";
  s.points = {{0.1, 0.2}, {0.3, 0.1}};
  s.points_label = "variant";
  s.highlight = 1;
  s.highlight_label = "best in sample";
  const auto svg = scatter(s);
  CHECK(count(svg, "<circle") == 2);           // the legend's and the other point
  CHECK(count(svg, "fill=\"#b5562b\"") == 3);  // the legend's diamond, the point and its label
  CHECK(count(svg, ">best in sample</text>") == 2);
  CHECK(count(svg, ">out of sample equal to in sample</text>") == 1);
}
