#include "report/backtest_forms.h"

#include <fmt/format.h>

#include <cmath>

#include "core/json.h"
#include "core/text.h"
#include "report/format.h"
#include "report/json_schema.h"
#include "report/table.h"

namespace keel::report {
namespace {

// A frictionless run's units, to 10 places.
std::string units_text(double units) {
  std::string s = fmt::format("{:.10f}", units);
  while (s.back() == '0') s.pop_back();
  if (s.back() == '.') s.pop_back();
  return s;
}

// A close read as a double, as the decimal it was stored as.
std::string price_text(const backtest::Shift& t) {
  if (t.price_places < 0) return fmt::format("{}", t.price);
  static constexpr double kTens[] = {1e0, 1e1, 1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                     1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15};
  return Decimal::scaled(std::llround(t.price * kTens[t.price_places]), t.price_places).str();
}

void drawdown_json(JsonWriter& j, const perf::RiskFigures& r) {
  if (!r.max_drawdown) {
    j.null();
    return;
  }
  const auto& d = *r.max_drawdown;
  j.begin_object();
  j.member("depth", d.depth).member("peak", d.peak.str()).member("trough", d.trough.str());
  j.key("recovery");
  if (d.recovery)
    j.value(d.recovery->str());
  else
    j.null();
  j.end_object();
}

}  // namespace

void run_figures_json(JsonWriter& j, const backtest::StrategyRun& s) {
  const auto& p = s.perf;
  j.member("end_value", p.closing_value.rounded(10));
  j.member("twr", p.twr.period).member("twr_annualized", p.twr.annualized);
  j.member("volatility_annualized", p.risk.daily_volatility);
  j.key("max_drawdown");
  drawdown_json(j, p.risk);
  if (p.benchmark) {
    j.member("excess", p.benchmark->excess_arithmetic);
    j.member("excess_annualized", p.benchmark->excess_geometric_annualized);
  }
  j.member("turnover_per_year", s.turnover_per_year);
  j.member("fees", s.fees).member("distributions", s.distributions.rounded(10));
  j.key("names").begin_object();
  j.member("min", s.names_min).member("mean", s.names_mean).member("max", s.names_max);
  j.end_object();
}

namespace {

void run_json(JsonWriter& j, std::string& text, const Emit& emit, const backtest::Result& result,
              const backtest::StrategyRun& s) {
  j.begin_object();
  run_figures_json(j, s);
  j.key("rebalances").begin_array();
  for (const auto& r : s.rebalances) {
    j.begin_object();
    j.member("date", r.day.str());
    j.member("passed", static_cast<unsigned long long>(r.passed));
    j.member("selected", static_cast<unsigned long long>(r.selected));
    j.member("names_after", r.names_after);
    j.member("value_before", r.value_before.rounded(10));
    j.member("traded", r.traded.rounded(10)).member("fees", r.fees);
    j.member("no_selection", r.no_selection);
    j.key("trades").begin_array();
    for (const auto& t : r.trades) {
      j.begin_object().member("symbol", result.symbols.at(t.security_id));
      j.member("side", std::string(rules::to_string(t.side)));
      j.member("quantity", t.quantity).member("price", t.price).member("fee", t.fee);
      j.end_object();
    }
    for (const auto& t : r.shifts) {
      j.begin_object().member("symbol", result.symbols.at(t.security_id));
      j.member("side", std::string(rules::to_string(t.side)));
      j.member("quantity", units_text(t.units)).member("price", price_text(t));
      j.member("fee", "0").end_object();
    }
    j.end_array();
    j.end_object();
    // Hands the text over as it grows: a run's trades can be tens of MB.
    if (text.size() >= (1u << 16)) {
      emit(text);
      text.clear();
    }
  }
  j.end_array();
  j.end_object();
}

}  // namespace

std::string notes_and_cautions(const std::vector<std::string>& notes,
                               const std::vector<std::string>& cautions) {
  std::string s;
  if (!notes.empty()) {
    s += "\nNotes:\n";
    for (const auto& n : notes) s += "  " + printable(n) + "\n";
  }
  s += "\nCautions:\n";
  for (const auto& c : cautions) s += "  - " + c + "\n";
  return s;
}

namespace {

std::string state_ahead(const perf::StateFigures& f) {
  if (f.periods == 0) return "";
  return fmt::format("{} ({:.0f}%)", f.ahead, 100.0 * f.ahead / f.periods);
}

void state_json(JsonWriter& j, const perf::StateFigures& f) {
  j.begin_object();
  j.member("periods", f.periods).member("ahead", f.ahead).member("mean", f.mean);
  j.member("benchmark_mean", f.benchmark_mean).member("mean_excess", f.mean_excess);
  j.end_object();
}

void states_json(JsonWriter& j, const perf::MarketStates& m) {
  j.begin_object();
  j.key("fell");
  state_json(j, m.fell);
  j.key("rose");
  state_json(j, m.rose);
  j.end_object();
}

}  // namespace

std::string figures_table(
    const std::vector<std::pair<std::string, const backtest::StrategyRun*>>& runs,
    const std::optional<std::string>& benchmark, const Style& style) {
  std::vector<Table::Column> cols{{"", Align::left, true}};
  for (const auto& [label, run] : runs) cols.push_back({label, Align::right});
  const auto& first = *runs.front().second;
  const bool bench = benchmark && first.perf.benchmark;
  if (bench) cols.push_back({"benchmark " + *benchmark, Align::right});
  Table t(cols);
  // A row of one figure per run, and the benchmark's when given.
  auto row = [&](std::string label,
                 const std::function<std::string(const backtest::StrategyRun&)>& f,
                 std::string bench_cell = "") {
    std::vector<std::string> cells{std::move(label)};
    for (const auto& [l, run] : runs) cells.push_back(f(*run));
    if (bench) cells.push_back(std::move(bench_cell));
    t.add_row(std::move(cells));
  };
  using Run = backtest::StrategyRun;
  row("end value", [](const Run& a) { return a.perf.closing_value.fixed(2); });
  row(
      "return (time-weighted)", [](const Run& a) { return pct(a.perf.twr.period); },
      bench ? pct(first.perf.benchmark->benchmark.period) : "");
  row(
      "annualized", [](const Run& a) { return pct(a.perf.twr.annualized); },
      bench ? pct(first.perf.benchmark->benchmark.annualized) : "");
  if (bench)
    row("excess over benchmark",
        [](const Run& a) { return pct(a.perf.benchmark->excess_arithmetic); });
  row("volatility (annualized, daily)",
      [](const Run& a) { return pct(a.perf.risk.daily_volatility); });
  auto dd = [](int part) {
    return [part](const Run& a) {
      const auto& rf = a.perf.risk;
      if (!rf.max_drawdown) return std::string(part == 0 ? "none" : "");
      const auto& d = *rf.max_drawdown;
      if (part == 0) return fmt::format("{:.2f}%", d.depth * 100);
      if (part == 1) return d.peak.str() + ".." + d.trough.str();
      return d.recovery ? d.recovery->str() : std::string("not yet");
    };
  };
  row("max drawdown", dd(0));
  row("  from peak to trough", dd(1));
  row("  back at the peak", dd(2));
  row("turnover per year",
      [](const Run& a) { return fmt::format("{:.1f}%", a.turnover_per_year * 100); });
  row("fees paid", [](const Run& a) { return a.fees.fixed(2); });
  row("distributions", [](const Run& a) { return a.distributions.fixed(2); });
  row("names held (min/mean/max)", [](const Run& a) {
    return fmt::format("{}/{:.1f}/{}", a.names_min, a.names_mean, a.names_max);
  });
  return t.render(style);
}

std::string down_markets_text(const backtest::DownMarkets& d, const Style& style) {
  std::string s = fmt::format(
      "\nDown markets: complete months and {}-month windows in which the benchmark {} fell "
      "(returned less than zero) or rose\n",
      d.window_months, printable(d.benchmark));
  std::vector<Table::Column> cols{{"", Align::left, true}};
  for (const auto& r : d.runs) cols.push_back({r.label, Align::right});
  cols.push_back({"benchmark " + d.benchmark, Align::right});
  Table t(cols);
  auto row = [&](std::string label,
                 const std::function<std::string(const backtest::RunInMarkets&)>& f,
                 std::string bench_cell = "") {
    std::vector<std::string> cells{std::move(label)};
    for (const auto& r : d.runs) cells.push_back(f(r));
    cells.push_back(std::move(bench_cell));
    t.add_row(std::move(cells));
  };
  using R = backtest::RunInMarkets;
  auto state = [&](const std::string& what, auto pick) {
    const perf::StateFigures& b = pick(d.runs.front());
    row(fmt::format("{}: {}", what, b.periods), [](const R&) { return std::string(); });
    row(
        "  mean return", [&](const R& r) { return pct(pick(r).mean); }, pct(b.benchmark_mean));
    row("  mean excess over the benchmark", [&](const R& r) { return pct(pick(r).mean_excess); });
    row("  ahead of the benchmark", [&](const R& r) { return state_ahead(pick(r)); });
  };
  state("months the benchmark fell",
        [](const R& r) -> const perf::StateFigures& { return r.months.fell; });
  state("months the benchmark rose",
        [](const R& r) -> const perf::StateFigures& { return r.months.rose; });
  const std::string w = fmt::format("{}-month windows the benchmark", d.window_months);
  state(w + " fell", [](const R& r) -> const perf::StateFigures& { return r.windows.fell; });
  state(w + " rose", [](const R& r) -> const perf::StateFigures& { return r.windows.rose; });
  row("up-capture (months the benchmark rose)", [](const R& r) { return pct(r.capture.up); });
  row("down-capture (months the benchmark fell)", [](const R& r) { return pct(r.capture.down); });
  s += t.render(style);
  if (d.falls.empty())
    return s + fmt::format("The benchmark {} never fell.\n", printable(d.benchmark));
  s += fmt::format("\nThe benchmark's {} worst falls, and each run's return over the same days:\n",
                   d.falls.size());
  std::vector<Table::Column> fcols{{"from peak", Align::left},
                                   {"to trough", Align::left},
                                   {"back at the peak", Align::left},
                                   {"benchmark " + d.benchmark, Align::right}};
  for (const auto& r : d.runs) fcols.push_back({r.label, Align::right});
  Table f(fcols);
  for (std::size_t i = 0; i < d.falls.size(); ++i) {
    const auto& fall = d.falls[i];
    std::vector<std::string> cells{fall.peak.str(), fall.trough.str(),
                                   fall.recovery ? fall.recovery->str() : "not yet",
                                   fmt::format("{:.2f}%", fall.depth * 100)};
    for (const auto& r : d.runs) cells.push_back(pct(r.in_falls[i]));
    f.add_row(std::move(cells));
  }
  return s + f.render(style);
}

void down_markets_json(JsonWriter& j, const std::optional<backtest::DownMarkets>& dm) {
  if (!dm) {
    j.null();
    return;
  }
  j.begin_object();
  j.member("benchmark", dm->benchmark).member("window_months", dm->window_months);
  j.member("state_rule", "fell: the benchmark's return below zero; rose: zero or above");
  j.member("capture_definition",
           "geometric mean monthly return of the run over the months in a state, divided by "
           "the benchmark's over the same months (common practice, from memory)");
  j.key("falls").begin_array();
  for (const auto& f : dm->falls) {
    j.begin_object();
    j.member("depth", f.depth).member("peak", f.peak.str()).member("trough", f.trough.str());
    j.key("recovery");
    if (f.recovery)
      j.value(f.recovery->str());
    else
      j.null();
    j.end_object();
  }
  j.end_array();
  j.key("runs").begin_array();
  for (const auto& r : dm->runs) {
    j.begin_object();
    j.member("label", r.label);
    j.key("months");
    states_json(j, r.months);
    j.key("windows");
    states_json(j, r.windows);
    j.member("up_capture", r.capture.up).member("up_months", r.capture.up_months);
    j.member("down_capture", r.capture.down).member("down_months", r.capture.down_months);
    j.key("in_falls").begin_array();
    for (const auto& x : r.in_falls) j.value(x);
    j.end_array();
    j.end_object();
  }
  j.end_array();
  j.end_object();
}

std::string backtest_json(const backtest::Result& r) {
  std::string all;
  backtest_json(r, [&](const std::string& part) { all += part; });
  return all;
}

void backtest_json(const backtest::Result& r, const Emit& emit) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "backtest", 2);
  j.member("rule", r.rule_name).member("from", r.from.str()).member("to", r.to.str());
  j.member("start_value", r.start_value).member("frictionless", r.frictionless);
  j.member("benchmark", r.benchmark);
  if (r.benchmark && r.rule.perf.benchmark) {
    const auto& b = r.rule.perf.benchmark->benchmark;
    j.member("benchmark_twr", b.period).member("benchmark_twr_annualized", b.annualized);
  }
  j.key("rebalance_days").begin_array();
  for (Date d : r.rebalance_days) j.value(d.str());
  j.end_array();
  j.key("rule_run");
  run_json(j, s, emit, r, r.rule);
  j.key("baseline_run");
  run_json(j, s, emit, r, r.baseline);
  j.key("rolling").begin_array();
  for (const auto& w : r.rolling) {
    j.begin_object();
    j.member("against", w.against).member("months", w.months).member("windows", w.windows);
    j.member("rule_ahead", w.beat).member("median_excess", w.median_excess);
    j.member("worst_excess", w.worst_excess).member("best_excess", w.best_excess);
    j.end_object();
  }
  j.end_array();
  j.key("curve").begin_array();
  for (std::size_t i = 0; i < r.rule.curve.size(); ++i) {
    const auto& c = r.rule.curve[i];
    j.begin_object();
    j.member("date", c.day.str()).member("value", c.value.rounded(10));
    j.member("cash", c.cash.rounded(10)).member("names", c.names);
    j.member("baseline_value", r.baseline.curve[i].value.rounded(10));
    j.key("benchmark");
    if (i < r.benchmark_curve.size() && r.benchmark_curve[i])
      j.value(*r.benchmark_curve[i]);
    else
      j.null();
    j.end_object();
  }
  j.end_array();
  j.key("down_markets");
  down_markets_json(j, r.down_markets);
  j.member("notes", r.notes).member("cautions", r.cautions);
  j.end_object();
  emit(s + "\n");
}

std::string rolling_text(const backtest::Result& r) {
  std::string s;
  for (const auto& w : r.rolling) {
    if (&w == &r.rolling.front())
      s += fmt::format("\nHeld {} months from the start of any complete month:\n", w.months);
    if (w.windows == 0) {
      s += fmt::format("  against the {}: no window of {} complete months\n", w.against, w.months);
      continue;
    }
    s += fmt::format(
        "  against the {}: the rule was ahead in {} of {} windows ({:.0f}%); excess at the "
        "median {}, worst {}, best {}\n",
        w.against, w.beat, w.windows, 100.0 * w.beat / w.windows, pct(w.median_excess),
        pct(w.worst_excess), pct(w.best_excess));
  }
  return s;
}

std::string backtest_text(const backtest::Result& r, const Style& style) {
  std::string s = fmt::format("Back-test of rule '{}' from {} to {} ({})\n", printable(r.rule_name),
                              r.from.str(), r.to.str(),
                              r.frictionless ? "frictionless: no fees, fractional units, fully "
                                               "invested"
                                             : "the rule's fees, bands and lot sizes");
  s += fmt::format("Start value {}; {} rebalancing days, {} to {}\n\n", r.start_value.fixed(2),
                   r.rebalance_days.size(), r.rebalance_days.front().str(),
                   r.rebalance_days.back().str());
  s += figures_table({{"rule", &r.rule}, {"baseline", &r.baseline}}, r.benchmark, style);

  s += rolling_text(r);
  if (r.down_markets) s += down_markets_text(*r.down_markets, style);
  return s + notes_and_cautions(r.notes, r.cautions);
}

std::string backtest_curve_csv(const backtest::Result& r) {
  std::string s = "date,value,cash,names,baseline_value,benchmark\n";
  for (std::size_t i = 0; i < r.rule.curve.size(); ++i) {
    const auto& c = r.rule.curve[i];
    s += fmt::format("{},{},{},{},{},{}\n", c.day.str(), c.value.fixed(6), c.cash.fixed(6), c.names,
                     r.baseline.curve[i].value.fixed(6), benchmark_cell(r.benchmark_curve, i));
  }
  return s;
}

std::string benchmark_cell(const std::vector<std::optional<Decimal>>& curve, std::size_t i) {
  return i < curve.size() && curve[i] ? curve[i]->str() : std::string();
}

namespace {

void quintiles_json(JsonWriter& j, std::string_view name,
                    const std::array<std::optional<double>, 5>& q) {
  j.key(name).begin_array();
  for (const auto& x : q) j.value(x);
  j.end_array();
}

}  // namespace

std::string signal_json(const backtest::SignalResult& r) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "signal", 3);
  j.member("rule", r.rule_name).member("from", r.from.str()).member("to", r.to.str());
  j.member("sign_convention",
           "IC = Spearman(z, forward return); low z is cheap, so a rule whose cheap names do "
           "better has a negative IC");
  j.key("horizons").begin_array();
  for (const auto& h : r.horizons) {
    j.begin_object();
    j.member("months", h.months).member("days", static_cast<unsigned long long>(h.days.size()));
    j.member("mean_ic", h.mean_ic).member("ic_standard_error", h.ic_standard_error);
    j.member("t_stat", h.t_stat);
    j.member("share_expected_sign", h.share_expected_sign).member("mean_spread", h.mean_spread);
    quintiles_json(j, "quintile_means", h.quintile_means);
    j.key("by_day").begin_array();
    for (const auto& d : h.days) {
      j.begin_object();
      j.member("date", d.day.str()).member("end", d.end.str()).member("names", d.names);
      j.member("ic", d.ic).member("spread", d.spread);
      quintiles_json(j, "quintiles", d.quintiles);
      j.end_object();
    }
    j.end_array();
    j.end_object();
  }
  j.end_array();
  if (!r.by_name.empty()) {
    j.key("by_name").begin_array();
    for (const auto& n : r.by_name) {
      j.begin_object().member("symbol", n.symbol).key("records").begin_array();
      for (std::size_t i = 0; i < n.records.size(); ++i) {
        j.begin_object().member("months", r.by_name_horizons[i]);
        j.member("correlation", n.records[i].correlation);
        j.member("observations", n.records[i].observations).end_object();
      }
      j.end_array().end_object();
    }
    j.end_array();
  }
  j.member("notes", r.notes).member("cautions", r.cautions);
  j.end_object();
  return s + "\n";
}

std::string signal_figures_text(const backtest::SignalResult& r, const Style& style) {
  std::string s = fmt::format("Signal check of rule '{}' from {} to {}\n", printable(r.rule_name),
                              r.from.str(), r.to.str());
  s += "IC = Spearman rank correlation of z with the forward total return. Low z is cheap, so a "
       "rule whose cheap names do better has a negative IC.\n\n";
  Table t({{"months", Align::right},
           {"days", Align::right},
           {"mean IC", Align::right},
           {"t", Align::right},
           {"IC < 0", Align::right},
           {"cheapest - dearest fifth", Align::right}});
  for (const auto& h : r.horizons)
    t.add_row({std::to_string(h.months), std::to_string(h.days.size()),
               h.mean_ic ? fmt::format("{:.4f}", *h.mean_ic) : "n/a",
               h.t_stat ? fmt::format("{:.2f}", *h.t_stat) : "n/a", pct(h.share_expected_sign),
               pct(h.mean_spread)});
  s += t.render(style);
  if (!r.by_name.empty()) {
    s += fmt::format(
        "\nTrack record by name on {}: correlation of z with the later return (r) over the "
        "months it rests on (n), per horizon in months.\n",
        r.to.str());
    std::vector<Table::Column> columns{{"symbol"}};
    for (const int months : r.by_name_horizons) {
      columns.push_back({fmt::format("r {}", months), Align::right});
      columns.push_back({fmt::format("n {}", months), Align::right});
    }
    Table names(std::move(columns));
    for (const auto& n : r.by_name) {
      std::vector<std::string> row{n.symbol};
      for (const auto& rec : n.records) {
        row.push_back(rec.correlation ? z_text(rec.correlation) : "n/a");
        row.push_back(std::to_string(rec.observations));
      }
      names.add_row(std::move(row));
    }
    s += names.render(style);
  }
  return s;
}

std::string signal_text(const backtest::SignalResult& r, const Style& style) {
  return signal_figures_text(r, style) + notes_and_cautions(r.notes, r.cautions);
}

std::string closing_notes(const std::vector<std::string>& notes,
                          const std::vector<std::string>& cautions) {
  return notes_and_cautions(notes, cautions);
}

}  // namespace keel::report
