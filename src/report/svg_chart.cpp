#include "report/svg_chart.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>

#include "report/html.h"

namespace keel::report::svg {
namespace {

constexpr const char* kInk = "#1d2a33";   // text, axes, the zero line
constexpr const char* kGrid = "#d9d2c5";  // grid lines
constexpr const char* kPlot = "#fffdf9";  // the plot's ground
constexpr double kWidth = 720;

const char* const kMonths[] = {"Jan", "Feb", "Mar", "Apr", "May", "Jun",
                               "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"};

// A series' dash pattern and marker, by style number.
constexpr const char* kDashes[] = {"", "7 4", "2 3", "9 3 2 3", "4 2"};
constexpr int kStyles = 5;

std::string f1(double x) {
  // "-0.0" would make equal inputs print differently.
  const std::string s = fmt::format("{:.1f}", x);
  return s == "-0.0" ? "0.0" : s;
}

std::string esc(const std::string& s) {
  return html_escape(s);
}

int style_of(int style) {
  return ((style % kStyles) + kStyles) % kStyles;
}

std::string dash_attr(int style) {
  const char* d = kDashes[style_of(style)];
  return *d ? fmt::format(" stroke-dasharray=\"{}\"", d) : std::string();
}

// The style's marker centred on (x, y): circle, square, triangle, diamond, cross.
std::string marker(int style, double x, double y, const char* fill) {
  const double r = 3.2;
  switch (style_of(style)) {
    case 0:
      return fmt::format(
          "<circle cx=\"{}\" cy=\"{}\" r=\"{}\" fill=\"{}\" stroke=\"#fff\" "
          "stroke-width=\"0.8\"/>\n",
          f1(x), f1(y), f1(r), fill);
    case 1:
      return fmt::format(
          "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" "
          "stroke=\"#fff\" stroke-width=\"0.8\"/>\n",
          f1(x - r), f1(y - r), f1(2 * r), f1(2 * r), fill);
    case 2:
      return fmt::format(
          "<polygon points=\"{},{} {},{} {},{}\" fill=\"{}\" stroke=\"#fff\" "
          "stroke-width=\"0.8\"/>\n",
          f1(x), f1(y - r - 0.6), f1(x + r + 0.4), f1(y + r), f1(x - r - 0.4), f1(y + r), fill);
    case 3:
      return fmt::format(
          "<polygon points=\"{},{} {},{} {},{} {},{}\" fill=\"{}\" stroke=\"#fff\" "
          "stroke-width=\"0.8\"/>\n",
          f1(x), f1(y - r - 0.8), f1(x + r + 0.8), f1(y), f1(x), f1(y + r + 0.8), f1(x - r - 0.8),
          f1(y), fill);
    default:
      return fmt::format(
          "<path d=\"M{} {}L{} {}M{} {}L{} {}\" stroke=\"{}\" "
          "stroke-width=\"1.8\"/>\n",
          f1(x - r), f1(y - r), f1(x + r), f1(y + r), f1(x - r), f1(y + r), f1(x + r), f1(y - r),
          fill);
  }
}

// The plot area inside the chart.
struct Frame {
  double width = kWidth, height = 300, left = 76, right = 150, top = 58, bottom = 48;
  double x0() const { return left; }
  double x1() const { return width - right; }
  double y0() const { return height - bottom; }
  double y1() const { return top; }
};

std::string open(const Frame& f, const std::string& title) {
  return fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {} {}\" role=\"img\" "
      "aria-label=\"{}\" class=\"chart\">\n"
      "<rect x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"{}\"/>\n"
      "<text x=\"{}\" y=\"20\" class=\"title\" font-size=\"13\" font-weight=\"600\" "
      "fill=\"{}\">{}</text>\n",
      f1(f.width), f1(f.height), esc(title), f1(f.width), f1(f.height), kPlot, f1(f.left - 60),
      kInk, esc(title));
}

std::string axis_titles(const Frame& f, const std::string& x_title, const std::string& y_title) {
  const double mid_y = (f.y0() + f.y1()) / 2;
  return fmt::format(
      "<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" class=\"axis-title\" font-size=\"10\" "
      "fill=\"{}\">{}</text>\n"
      "<text x=\"14\" y=\"{}\" text-anchor=\"middle\" class=\"axis-title\" font-size=\"10\" "
      "fill=\"{}\" transform=\"rotate(-90 14 {})\">{}</text>\n",
      f1((f.x0() + f.x1()) / 2), f1(f.height - 8), kInk, esc(x_title), f1(mid_y), kInk, f1(mid_y),
      esc(y_title));
}

std::string no_data(const Frame& f) {
  return fmt::format(
      "<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" font-size=\"11\" fill=\"{}\">no "
      "data</text>\n",
      f1((f.x0() + f.x1()) / 2), f1((f.y0() + f.y1()) / 2), kInk);
}

std::string tick_text(double x, double y, const char* anchor, const std::string& text) {
  return fmt::format(
      "<text x=\"{}\" y=\"{}\" text-anchor=\"{}\" class=\"tick\" font-size=\"9\" "
      "fill=\"{}\">{}</text>\n",
      f1(x), f1(y), anchor, kInk, esc(text));
}

std::string hline(const Frame& f, double y, bool zero) {
  return fmt::format(
      "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"{}\"/>\n",
      f1(f.x0()), f1(y), f1(f.x1()), f1(y), zero ? kInk : kGrid, zero ? "1" : "0.6");
}

// Linear ticks covering lo..hi.
std::vector<double> linear_ticks(double lo, double hi) {
  const double step = nice_step(hi - lo, 5);
  std::vector<double> out;
  for (double v = std::ceil(lo / step) * step; v <= hi + step * 1e-9; v += step)
    out.push_back(std::abs(v) < step * 1e-9 ? 0.0 : v);
  return out;
}

// Ticks of a log scale over 10^lo..10^hi: 1, 2 and 5 x 10^k, thinned to
// powers of ten when there are many, and 1..9 x 10^k when there are fewer than three.
std::vector<double> log_ticks(double lo, double hi) {
  auto pick = [&](std::initializer_list<double> ms) {
    std::vector<double> out;
    for (int k = static_cast<int>(std::floor(lo)); k <= static_cast<int>(std::ceil(hi)); ++k)
      for (const double m : ms) {
        const double v = m * std::pow(10.0, k);
        const double l = std::log10(v);
        if (l >= lo - 1e-12 && l <= hi + 1e-12) out.push_back(v);
      }
    return out;
  };
  auto out = pick({1, 2, 5});
  if (out.size() > 8) out = pick({1});
  if (out.size() < 3) out = pick({1, 2, 3, 4, 5, 6, 7, 8, 9});
  return out;
}

// Labels at the right of the plot, moved apart so that none overlaps.
struct EndLabel {
  double y = 0;
  std::string text;
  const char* fill = kInk;
};
std::string end_labels(const Frame& f, std::vector<EndLabel> labels) {
  std::sort(labels.begin(), labels.end(),
            [](const EndLabel& a, const EndLabel& b) { return a.y < b.y; });
  constexpr double kGap = 12;
  for (std::size_t i = 1; i < labels.size(); ++i)
    labels[i].y = std::max(labels[i].y, labels[i - 1].y + kGap);
  // Pushed below the plot: move the stack back up.
  if (!labels.empty() && labels.back().y > f.y0() + 4) {
    labels.back().y = f.y0() + 4;
    for (std::size_t i = labels.size() - 1; i-- > 0;)
      labels[i].y = std::min(labels[i].y, labels[i + 1].y - kGap);
  }
  std::string out;
  for (const auto& l : labels)
    out += fmt::format(
        "<text x=\"{}\" y=\"{}\" class=\"end-label\" font-size=\"10\" fill=\"{}\">{}</text>\n",
        f1(f.x1() + 8), f1(l.y + 3.5), l.fill, esc(l.text));
  return out;
}

struct LegendItem {
  std::string label;
  const char* colour;
  int style = 0;
  enum class Kind { line, swatch, band } kind = Kind::line;
};
std::string legend(const Frame& f, const std::vector<LegendItem>& items) {
  std::string out;
  double x = f.left - 60;
  double y = 40;
  for (const auto& it : items) {
    const double width = 34 + 6.0 * static_cast<double>(it.label.size());
    if (x + width > f.width - 10 && x > f.left - 60) {
      x = f.left - 60;
      y += 14;
    }
    if (it.kind == LegendItem::Kind::line) {
      out += fmt::format(
          "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"2\"{}/>\n",
          f1(x), f1(y - 3.5), f1(x + 22), f1(y - 3.5), it.colour, dash_attr(it.style));
      out += marker(it.style, x + 11, y - 3.5, it.colour);
    } else {
      out += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"14\" height=\"9\" fill=\"{}\"{}/>\n",
                         f1(x + 4), f1(y - 8), it.colour,
                         it.kind == LegendItem::Kind::band ? " fill-opacity=\"0.55\"" : "");
      if (it.kind == LegendItem::Kind::swatch) out += marker(it.style, x + 11, y - 3.5, kInk);
    }
    out += fmt::format(
        "<text x=\"{}\" y=\"{}\" class=\"legend\" font-size=\"10\" fill=\"{}\">{}</text>\n",
        f1(x + 27), f1(y), kInk, esc(it.label));
    x += width;
  }
  return out;
}

bool usable(double v, bool log_scale) {
  return std::isfinite(v) && (!log_scale || v > 0);
}

// Ticks on a time axis from `first` to `last`: each year's first day, or
// each month's (every third when there are many) for a span under two years.
std::vector<std::pair<Date, std::string>> date_ticks(Date first, Date last) {
  std::vector<std::pair<Date, std::string>> out;
  if (last - first >= 730) {
    const int every = (last.year() - first.year()) > 12 ? 2 : 1;
    for (int y = first.year() + 1; y <= last.year(); ++y)
      if ((y - first.year()) % every == 0)
        out.emplace_back(Date::from_ymd(y, 1, 1), fmt::format("{}", y));
    return out;
  }
  const int months = (last.year() - first.year()) * 12 + last.month() - first.month();
  const int every = months > 8 ? 3 : 1;
  for (int m = first.year() * 12 + first.month(); m <= last.year() * 12 + last.month() - 1; ++m) {
    const Date d = Date::from_ymd(m / 12, m % 12 + 1, 1);
    if (d <= first || (m % 12) % every != 0) continue;
    out.emplace_back(d, fmt::format("{}-{:02}", d.year(), d.month()));
  }
  return out;
}

}  // namespace

const std::vector<PaletteEntry>& palette() {
  static const std::vector<PaletteEntry> entries{
      {Ink::rule, "copper", "#b5562b", "the rule under test (the first rule of a comparison)"},
      {Ink::other_rule, "plum", "#7b3f8c", "every other rule of a comparison"},
      {Ink::baseline, "steel", "#35607f", "the equal-weight baseline"},
      {Ink::benchmark, "sage", "#6f8f72", "the benchmark"},
      {Ink::gain, "teal", "#1b6e68", "a figure above zero, where its sign is the point"},
      {Ink::loss, "raspberry", "#a3324f", "a figure below zero, where its sign is the point"},
      {Ink::band, "sand", "#b3a78e", "uncertainty: a band of plus and minus two standard errors"},
      {Ink::variant, "pewter", "#7d8a94", "one variant of a sweep"},
  };
  return entries;
}

const char* colour(Ink ink) {
  for (const auto& e : palette())
    if (e.ink == ink) return e.hex;
  return kInk;
}

std::string format_value(double v, Format f) {
  switch (f) {
    case Format::percent: {
      if (v == 0) return "0%";
      const double p = v * 100;
      const std::string s = fmt::format("{:.{}f}%", p, std::abs(p) < 1 ? 2 : 1);
      return s == "-0.00%" ? "0.00%" : s;
    }
    case Format::money: {
      const std::string s = fmt::format("{:.0f}", std::abs(v));
      std::string out = v <= -0.5 ? "-" : "";
      for (std::size_t i = 0; i < s.size(); ++i) {
        if (i > 0 && (s.size() - i) % 3 == 0) out += ',';
        out += s[i];
      }
      return out;
    }
    case Format::count: {
      const std::string s = fmt::format("{:.0f}", v);
      return s == "-0" ? "0" : s;
    }
    case Format::ratio: {
      const std::string s = fmt::format("{:.3f}", v);
      return s == "-0.000" ? "0.000" : s;
    }
  }
  return {};
}

std::string line_chart(const LineChart& c) {
  Frame f;
  std::string out = open(f, c.title);
  out += axis_titles(f, c.x_title, c.y_title);
  std::vector<LegendItem> items;
  for (const auto& l : c.lines) items.push_back({l.label, colour(l.ink), l.style});
  out += legend(f, items);

  bool any = false;
  Date first, last;
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  auto scaled = [&](double v) { return c.log_scale ? std::log10(v) : v; };
  for (const auto& l : c.lines)
    for (const auto& p : l.points) {
      if (!usable(p.value, c.log_scale)) continue;
      first = any ? std::min(first, p.day) : p.day;
      last = any ? std::max(last, p.day) : p.day;
      lo = std::min(lo, scaled(p.value));
      hi = std::max(hi, scaled(p.value));
      any = true;
    }
  if (!any) return out + no_data(f) + "</svg>\n";
  if (!c.log_scale && c.zero_line && c.format == Format::percent) {
    lo = std::min(lo, 0.0);
    hi = std::max(hi, 0.0);
  }
  if (hi - lo < 1e-12) {
    const double pad = c.log_scale ? 0.05 : std::max(std::abs(hi) * 0.05, 0.01);
    lo -= pad;
    hi += pad;
  }
  const double pad = (hi - lo) * 0.06;
  lo -= pad;
  hi += pad;
  const double span = std::max(1, last - first);
  auto x = [&](Date d) { return f.x0() + (f.x1() - f.x0()) * ((d - first) / span); };
  auto y = [&](double v) { return f.y0() - (f.y0() - f.y1()) * ((scaled(v) - lo) / (hi - lo)); };

  const auto ticks = c.log_scale ? log_ticks(lo, hi) : linear_ticks(lo, hi);
  for (const double v : ticks) {
    out += hline(f, y(v), !c.log_scale && c.zero_line && v == 0);
    out += tick_text(f.x0() - 6, y(v) + 3.5, "end", format_value(v, c.format));
  }
  for (const auto& [day, label] : date_ticks(first, last)) {
    const double xx = x(day);
    out += fmt::format(
        "<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\" stroke=\"{3}\" stroke-width=\"0.6\"/>\n",
        f1(xx), f1(f.y1()), f1(f.y0() + 4), kGrid);
    out += tick_text(xx, f.y0() + 16, "middle", label);
  }
  out += fmt::format(
      "<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\" stroke=\"{3}\" stroke-width=\"1\"/>\n",
      f1(f.x0()), f1(f.y1()), f1(f.y0()), kInk);

  std::vector<EndLabel> ends;
  for (const auto& l : c.lines) {
    std::vector<Point> pts;
    for (const auto& p : l.points)
      if (usable(p.value, c.log_scale)) pts.push_back(p);
    if (pts.empty()) continue;
    std::string d;
    for (const auto& p : pts)
      d += fmt::format("{}{},{}", d.empty() ? "" : " ", f1(x(p.day)), f1(y(p.value)));
    out += fmt::format(
        "<polyline fill=\"none\" stroke=\"{}\" stroke-width=\"1.8\" stroke-linejoin=\"round\"{} "
        "points=\"{}\"/>\n",
        colour(l.ink), dash_attr(l.style), d);
    // About ten markers a line, offset by style so that lines' markers do not sit together.
    const std::size_t every = std::max<std::size_t>(1, pts.size() / 10);
    for (std::size_t i = (every * static_cast<std::size_t>(style_of(l.style))) / kStyles;
         i + 1 < pts.size(); i += every)
      out += marker(l.style, x(pts[i].day), y(pts[i].value), colour(l.ink));
    out += marker(l.style, x(pts.back().day), y(pts.back().value), colour(l.ink));
    ends.push_back({y(pts.back().value), l.label + " " + format_value(pts.back().value, c.format),
                    colour(l.ink)});
  }
  out += end_labels(f, ends);
  return out + "</svg>\n";
}

std::string bar_chart(const BarChart& c) {
  Frame f;
  f.right = 24;
  std::string out = open(f, c.title);
  out += axis_titles(f, c.x_title, c.y_title);
  std::vector<LegendItem> items;
  if (c.by_sign) {
    items.push_back({"above zero", colour(Ink::gain), 0, LegendItem::Kind::swatch});
    items.push_back({"below zero", colour(Ink::loss), 0, LegendItem::Kind::swatch});
    if (!c.series.empty()) items.front().label = c.series.front().label + ", above zero";
    if (!c.series.empty()) items.back().label = c.series.front().label + ", below zero";
  } else {
    for (const auto& s : c.series)
      items.push_back({s.label, colour(s.ink), s.style, LegendItem::Kind::swatch});
  }
  if (!c.range_label.empty())
    items.push_back({c.range_label, colour(Ink::band), 0, LegendItem::Kind::band});
  out += legend(f, items);

  double lo = 0, hi = 0;
  bool any = false;
  for (const auto& s : c.series) {
    for (const auto& v : s.values)
      if (v && std::isfinite(*v)) {
        lo = std::min(lo, *v);
        hi = std::max(hi, *v);
        any = true;
      }
    for (const auto& r : s.ranges)
      if (r && std::isfinite((*r)[0]) && std::isfinite((*r)[1])) {
        lo = std::min({lo, (*r)[0], (*r)[1]});
        hi = std::max({hi, (*r)[0], (*r)[1]});
      }
  }
  if (!any || c.categories.empty()) return out + no_data(f) + "</svg>\n";
  if (hi - lo < 1e-12) hi = lo + (c.format == Format::percent ? 0.01 : 1);
  const double pad = (hi - lo) * 0.1;
  if (lo < 0) lo -= pad;
  if (hi > 0) hi += pad;
  auto y = [&](double v) { return f.y0() - (f.y0() - f.y1()) * ((v - lo) / (hi - lo)); };
  for (const double v : linear_ticks(lo, hi)) {
    out += hline(f, y(v), v == 0);
    out += tick_text(f.x0() - 6, y(v) + 3.5, "end", format_value(v, c.format));
  }
  const std::size_t n = c.categories.size();
  const double slot = (f.x1() - f.x0()) / static_cast<double>(n);
  const std::size_t label_every = std::max<std::size_t>(1, (n + 15) / 16);
  for (std::size_t i = 0; i < n; i += label_every)
    out += tick_text(f.x0() + slot * (static_cast<double>(i) + 0.5), f.y0() + 16, "middle",
                     c.categories[i]);
  const double m = static_cast<double>(std::max<std::size_t>(1, c.series.size()));
  const double bar = slot * 0.8 / m;
  const bool value_labels = n * c.series.size() <= 24;
  for (std::size_t k = 0; k < c.series.size(); ++k) {
    const auto& s = c.series[k];
    for (std::size_t i = 0; i < n && i < s.values.size(); ++i) {
      if (!s.values[i] || !std::isfinite(*s.values[i])) continue;
      const double v = *s.values[i];
      const double left =
          f.x0() + slot * static_cast<double>(i) + slot * 0.1 + bar * static_cast<double>(k);
      const double top = std::min(y(v), y(0)), height = std::max(0.6, std::abs(y(v) - y(0)));
      const char* fill = c.by_sign ? colour(v < 0 ? Ink::loss : Ink::gain) : colour(s.ink);
      out += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\"/>\n",
                         f1(left + 0.5), f1(top), f1(bar - 1), f1(height), fill);
      if (!c.by_sign && bar >= 7) out += marker(s.style, left + bar / 2, y(v), kInk);
      if (value_labels)
        out += tick_text(left + bar / 2, v < 0 ? y(v) + 12 : y(v) - 6, "middle",
                         format_value(v, c.format));
    }
    for (std::size_t i = 0; i < n && i < s.ranges.size(); ++i) {
      if (!s.ranges[i]) continue;
      const double cx = f.x0() + slot * static_cast<double>(i) + slot * 0.1 +
                        bar * (static_cast<double>(k) + 0.5);
      const double a = y((*s.ranges[i])[0]), b = y((*s.ranges[i])[1]);
      out += fmt::format(
          "<path d=\"M{0} {1}L{0} {2}M{3} {1}L{4} {1}M{3} {2}L{4} {2}\" stroke=\"{5}\" "
          "stroke-width=\"2\" fill=\"none\"/>\n",
          f1(cx), f1(a), f1(b), f1(cx - 5), f1(cx + 5), colour(Ink::band));
    }
  }
  return out + "</svg>\n";
}

BarChart histogram(std::string title, std::string x_title, const std::vector<double>& values,
                   int bins, Format format, std::string label, Ink ink) {
  BarChart c;
  c.title = std::move(title);
  c.x_title = std::move(x_title);
  c.y_title = "count";
  c.format = Format::count;
  std::vector<double> xs;
  for (const double v : values)
    if (std::isfinite(v)) xs.push_back(v);
  Bars b{std::move(label), ink, 0, {}, {}};
  if (!xs.empty() && bins > 0) {
    const auto [mn, mx] = std::minmax_element(xs.begin(), xs.end());
    const double lo = *mn, width = (*mx - *mn) / bins;
    const int n = width > 0 ? bins : 1;
    std::vector<double> counts(static_cast<std::size_t>(n), 0);
    for (const double v : xs) {
      const int i = width > 0 ? std::min(n - 1, static_cast<int>((v - lo) / width)) : 0;
      counts[static_cast<std::size_t>(i)] += 1;
    }
    for (int i = 0; i < n; ++i) {
      c.categories.push_back(format_value(lo + width * i, format));
      b.values.emplace_back(counts[static_cast<std::size_t>(i)]);
    }
  }
  c.series.push_back(std::move(b));
  return c;
}

std::string heat_grid(const HeatGrid& g) {
  Frame f;
  f.right = 20;
  f.top = 74;
  f.bottom = 34;
  const double row = 22;
  f.height = f.top + f.bottom + row * static_cast<double>(std::max<std::size_t>(1, g.years.size()));
  std::string out = open(f, g.title);
  out += axis_titles(f, "month", "year");
  out += legend(f, {{"above zero", colour(Ink::gain), 0, LegendItem::Kind::band},
                    {"below zero", colour(Ink::loss), 0, LegendItem::Kind::band},
                    {"stronger: further from zero; blank: not a complete month", kGrid, 0,
                     LegendItem::Kind::band}});
  double most = 0;
  for (const auto& r : g.cells)
    for (const auto& v : r)
      if (v && std::isfinite(*v)) most = std::max(most, std::abs(*v));
  if (g.years.empty()) return out + no_data(f) + "</svg>\n";
  const double col = (f.x1() - f.x0()) / 12;
  for (int m = 0; m < 12; ++m)
    out += tick_text(f.x0() + col * (m + 0.5), f.top - 6, "middle", kMonths[m]);
  for (std::size_t i = 0; i < g.years.size(); ++i) {
    const double top = f.top + row * static_cast<double>(i);
    out += tick_text(f.x0() - 8, top + row / 2 + 3.5, "end", fmt::format("{}", g.years[i]));
    if (i >= g.cells.size()) continue;
    for (int m = 0; m < 12; ++m) {
      const auto& v = g.cells[i][static_cast<std::size_t>(m)];
      const double left = f.x0() + col * m;
      if (!v || !std::isfinite(*v)) {
        out += fmt::format(
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"{}\" "
            "stroke-width=\"0.5\"/>\n",
            f1(left + 1), f1(top + 1), f1(col - 2), f1(row - 2), kGrid);
        continue;
      }
      const double strength = most > 0 ? std::abs(*v) / most : 0;
      const double opacity = 0.12 + 0.78 * strength;
      out += fmt::format(
          "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" "
          "fill-opacity=\"{:.2f}\"/>\n",
          f1(left + 1), f1(top + 1), f1(col - 2), f1(row - 2),
          colour(*v < 0 ? Ink::loss : Ink::gain), opacity);
      out += fmt::format(
          "<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" class=\"cell\" font-size=\"9\" "
          "fill=\"{}\">{}</text>\n",
          f1(left + col / 2), f1(top + row / 2 + 3.5), opacity > 0.55 ? "#ffffff" : kInk,
          esc(format_value(*v, g.format)));
    }
  }
  return out + "</svg>\n";
}

std::string scatter(const Scatter& s) {
  Frame f;
  f.right = 24;
  f.height = 340;
  std::string out = open(f, s.title);
  out += axis_titles(f, s.x_title, s.y_title);
  std::vector<LegendItem> items{
      {s.points_label, colour(Ink::variant), 0, LegendItem::Kind::swatch}};
  if (s.highlight)
    items.push_back({s.highlight_label, colour(Ink::rule), 3, LegendItem::Kind::swatch});
  if (s.diagonal) items.push_back({"out of sample equal to in sample", kInk, 2});
  out += legend(f, items);
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  double ylo = lo, yhi = -lo;
  for (const auto& p : s.points) {
    if (!std::isfinite(p.x) || !std::isfinite(p.y)) continue;
    lo = std::min(lo, p.x);
    hi = std::max(hi, p.x);
    ylo = std::min(ylo, p.y);
    yhi = std::max(yhi, p.y);
  }
  if (!(lo <= hi)) return out + no_data(f) + "</svg>\n";
  if (s.diagonal) {  // one scale for both, so that the diagonal is at 45 degrees
    lo = ylo = std::min(lo, ylo);
    hi = yhi = std::max(hi, yhi);
  }
  auto padded = [](double& a, double& b) {
    if (b - a < 1e-12) {
      a -= 0.05;
      b += 0.05;
    }
    const double pad = (b - a) * 0.08;
    a -= pad;
    b += pad;
  };
  padded(lo, hi);
  padded(ylo, yhi);
  auto x = [&](double v) { return f.x0() + (f.x1() - f.x0()) * ((v - lo) / (hi - lo)); };
  auto y = [&](double v) { return f.y0() - (f.y0() - f.y1()) * ((v - ylo) / (yhi - ylo)); };
  for (const double v : linear_ticks(ylo, yhi)) {
    out += hline(f, y(v), v == 0);
    out += tick_text(f.x0() - 6, y(v) + 3.5, "end", format_value(v, s.format));
  }
  for (const double v : linear_ticks(lo, hi)) {
    out += fmt::format(
        "<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\" stroke=\"{3}\" stroke-width=\"{4}\"/>\n",
        f1(x(v)), f1(f.y1()), f1(f.y0()), v == 0 ? kInk : kGrid, v == 0 ? "1" : "0.6");
    out += tick_text(x(v), f.y0() + 16, "middle", format_value(v, s.format));
  }
  if (s.diagonal) {
    const double a = std::max(lo, ylo), b = std::min(hi, yhi);
    out += fmt::format(
        "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"1\"{}/>\n",
        f1(x(a)), f1(y(a)), f1(x(b)), f1(y(b)), kInk, dash_attr(2));
  }
  for (std::size_t i = 0; i < s.points.size(); ++i) {
    const auto& p = s.points[i];
    if (!std::isfinite(p.x) || !std::isfinite(p.y) || (s.highlight && *s.highlight == i)) continue;
    out += marker(0, x(p.x), y(p.y), colour(Ink::variant));
  }
  if (s.highlight && *s.highlight < s.points.size()) {
    const auto& p = s.points[*s.highlight];
    if (std::isfinite(p.x) && std::isfinite(p.y)) {
      out += marker(3, x(p.x), y(p.y), colour(Ink::rule));
      out += fmt::format(
          "<text x=\"{}\" y=\"{}\" class=\"end-label\" font-size=\"10\" fill=\"{}\">{}</text>\n",
          f1(x(p.x) + 7), f1(y(p.y) - 6), colour(Ink::rule), esc(s.highlight_label));
    }
  }
  return out + "</svg>\n";
}

}  // namespace keel::report::svg
