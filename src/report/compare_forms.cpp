#include "report/compare_forms.h"

#include <fmt/format.h>

#include <initializer_list>
#include <optional>

#include "core/json.h"
#include "core/text.h"
#include "io/csv.h"
#include "perf/relative.h"
#include "report/backtest_forms.h"
#include "report/format.h"
#include "report/json_schema.h"

namespace keel::report {
namespace {

std::string month_text(Date d) {
  return d.str().substr(0, 7);
}

std::string ahead_text(const perf::ExcessSummary& e) {
  if (e.periods == 0) return "";
  return fmt::format("{} of {} ({:.0f}%)", e.ahead, e.periods, 100.0 * e.ahead / e.periods);
}

void return_figure_json(JsonWriter& j, const perf::ReturnFigure& f) {
  j.member("twr", f.period).member("twr_annualized", f.annualized);
}

void run_json(JsonWriter& j, const std::string& label, std::string_view kind,
              const backtest::StrategyRun& s, std::size_t rebalances) {
  j.begin_object();
  j.member("label", label).member("kind", std::string(kind));
  run_figures_json(j, s);
  j.member("rebalancing_days", static_cast<unsigned long long>(rebalances));
  j.end_object();
}

}  // namespace

std::string starts_table(const backtest::CompareResult& r, const Style& style, bool every_start) {
  // The first and last few start months; a summary of every one below them.
  constexpr std::size_t kEnds = 3;
  std::vector<Table::Column> cols{{"start", Align::left}};
  for (const auto& name : r.series) cols.push_back({name, Align::right});
  Table t(cols);
  const std::size_t n = r.starts.size();
  const bool shortened = !every_start && n > 2 * kEnds + 2;
  auto add = [&](std::size_t k) {
    std::vector<std::string> cells{month_text(r.starts[k])};
    for (const auto& series : r.returns) cells.push_back(pct(series[k]));
    t.add_row(std::move(cells));
  };
  for (std::size_t k = 0; k < n; ++k) {
    if (shortened && k == kEnds) {
      t.add_row(std::vector<std::string>(cols.size(), "..."));
      k = n - kEnds;
    }
    add(k);
  }
  t.add_rule();
  // Each series' own figures: its excess over a return of zero.
  std::vector<perf::ExcessSummary> sums;
  for (const auto& series : r.returns) {
    const std::vector<std::optional<double>> xs(series.begin(), series.end());
    const std::vector<std::optional<double>> zero(xs.size(), 0.0);
    sums.push_back(perf::compare_returns(xs, zero));
  }
  for (const auto& [label, pick] :
       std::initializer_list<std::pair<const char*, std::optional<double> perf::ExcessSummary::*>>{
           {"worst", &perf::ExcessSummary::worst},
           {"median", &perf::ExcessSummary::median},
           {"best", &perf::ExcessSummary::best}}) {
    std::vector<std::string> cells{label};
    for (const auto& sum : sums) cells.push_back(pct(sum.*pick));
    t.add_row(std::move(cells));
  }
  std::string s = t.render(style);
  if (shortened)
    s += fmt::format(
        "{} of {} start months are left out above; --json and the --html page list every one.\n",
        n - 2 * kEnds, n);
  return s;
}

std::string pairings_text(const backtest::CompareResult& r, const Style& style) {
  std::string s = fmt::format(
      "\nEach rule against the others, held {} months (excess: the rule's return "
      "less the other's):\n",
      r.hold_months);
  Table p({{"rule", Align::left, true},
           {"against", Align::left, true},
           {"rule ahead", Align::right},
           {"mean excess", Align::right},
           {"median", Align::right},
           {"worst", Align::right},
           {"best", Align::right}});
  for (const auto& pr : r.pairings)
    p.add_row({r.series[pr.series], r.series[pr.against], ahead_text(pr.excess),
               pct(pr.excess.mean), pct(pr.excess.median), pct(pr.excess.worst),
               pct(pr.excess.best)});
  return s + p.render(style);
}

std::string compare_text(const backtest::CompareResult& r, const Style& style) {
  std::string s = fmt::format(
      "Comparison of {} rules from {} to {} ({})\n", r.runs.size(), r.from.str(), r.to.str(),
      r.frictionless ? "frictionless: no fees, fractional units, fully invested"
                     : "each rule's fees, bands and lot sizes");
  s += fmt::format(
      "Start value {}; the baseline holds every name that passes the screen of '{}', at equal "
      "weight\n\n",
      r.start_value.fixed(2), printable(r.labels.front()));
  std::vector<std::pair<std::string, const backtest::StrategyRun*>> runs;
  for (std::size_t i = 0; i < r.runs.size(); ++i) runs.emplace_back(r.labels[i], &r.runs[i].rule);
  runs.emplace_back("baseline", &r.runs.front().baseline);
  s += figures_table(runs, r.benchmark, style);
  {
    std::vector<std::string> days;
    for (const auto& run : r.runs)
      days.push_back(fmt::format("{} ({} to {})", run.rebalance_days.size(),
                                 run.rebalance_days.front().str(),
                                 run.rebalance_days.back().str()));
    s += "Rebalancing days: ";
    for (std::size_t i = 0; i < days.size(); ++i)
      s += fmt::format("{}{} {}", i ? "; " : "", printable(r.labels[i]), days[i]);
    s += "\n";
  }

  s += fmt::format("\nHeld {} months from the start of any complete month", r.hold_months);
  if (r.starts.empty()) {
    s += ": no start month has that many complete months after it\n";
  } else {
    s += fmt::format(": {} starts, {} to {}\n", r.starts.size(), month_text(r.starts.front()),
                     month_text(r.starts.back()));
    s += starts_table(r, style, false);
    s += pairings_text(r, style);
  }
  if (r.down_markets)
    s += down_markets_text(*r.down_markets, style);
  else
    s += "\nDown markets: give --benchmark to split the figures by the state of the market.\n";
  return s + notes_and_cautions(r.notes, r.cautions);
}

std::string compare_json(const backtest::CompareResult& r) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "compare", 1);
  j.member("from", r.from.str()).member("to", r.to.str());
  j.member("start_value", r.start_value).member("frictionless", r.frictionless);
  j.member("benchmark", r.benchmark).member("hold_months", r.hold_months);
  j.key("rules").begin_array();
  for (std::size_t i = 0; i < r.runs.size(); ++i) {
    j.begin_object();
    j.member("label", r.labels[i]).member("name", r.runs[i].rule_name);
    j.end_object();
  }
  j.end_array();
  j.member("baseline_of", r.labels.front());
  if (r.benchmark && r.runs.front().rule.perf.benchmark) {
    j.key("benchmark_figures").begin_object();
    return_figure_json(j, r.runs.front().rule.perf.benchmark->benchmark);
    j.end_object();
  } else {
    j.key("benchmark_figures").null();
  }
  j.key("runs").begin_array();
  for (std::size_t i = 0; i < r.runs.size(); ++i)
    run_json(j, r.labels[i], "rule", r.runs[i].rule, r.runs[i].rebalance_days.size());
  run_json(j, "baseline", "baseline", r.runs.front().baseline,
           r.runs.front().rebalance_days.size());
  j.end_array();
  j.key("start_any_month").begin_object();
  j.member("months", r.hold_months).member("series", r.series);
  j.key("starts").begin_array();
  for (std::size_t k = 0; k < r.starts.size(); ++k) {
    j.begin_object().member("month", month_text(r.starts[k]));
    j.key("returns").begin_array();
    for (const auto& series : r.returns) j.value(series[k]);
    j.end_array().end_object();
  }
  j.end_array();
  j.key("against").begin_array();
  for (const auto& pr : r.pairings) {
    j.begin_object();
    j.member("rule", r.series[pr.series]).member("against", r.series[pr.against]);
    j.member("starts", pr.excess.periods).member("rule_ahead", pr.excess.ahead);
    j.member("mean_excess", pr.excess.mean).member("median_excess", pr.excess.median);
    j.member("worst_excess", pr.excess.worst).member("best_excess", pr.excess.best);
    j.end_object();
  }
  j.end_array();
  j.end_object();
  j.key("down_markets");
  down_markets_json(j, r.down_markets);
  j.member("notes", r.notes).member("cautions", r.cautions);
  j.end_object();
  return s + "\n";
}

std::string compare_curve_csv(const backtest::CompareResult& r) {
  std::string s;
  std::vector<std::string> head{"date"};
  for (const auto& l : r.labels) head.push_back(l);
  head.push_back("baseline");
  head.push_back("benchmark");
  auto add = [&s](const std::vector<std::string>& cells) {
    io::append_export_record(s, std::vector<std::string_view>(cells.begin(), cells.end()));
  };
  add(head);
  const auto& first = r.runs.front();
  for (std::size_t i = 0; i < first.rule.curve.size(); ++i) {
    std::vector<std::string> cells{first.rule.curve[i].day.str()};
    for (const auto& run : r.runs) cells.push_back(run.rule.curve[i].value.fixed(6));
    cells.push_back(first.baseline.curve[i].value.fixed(6));
    cells.push_back(benchmark_cell(first.benchmark_curve, i));
    add(cells);
  }
  return s;
}

}  // namespace keel::report
