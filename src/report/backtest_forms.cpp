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

void run_json(JsonWriter& j, std::string& text, const Emit& emit, const backtest::Result& result,
              const backtest::StrategyRun& s) {
  const auto& p = s.perf;
  j.begin_object();
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

// The closing notes (when there are any) and cautions of a back-test or a signal check.
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

}  // namespace

std::string backtest_json(const backtest::Result& r) {
  std::string all;
  backtest_json(r, [&](const std::string& part) { all += part; });
  return all;
}

void backtest_json(const backtest::Result& r, const Emit& emit) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "backtest", 1);
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
    j.end_object();
  }
  j.end_array();
  j.member("notes", r.notes).member("cautions", r.cautions);
  j.end_object();
  emit(s + "\n");
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
  std::vector<Table::Column> cols{
      {"", Align::left, true}, {"rule", Align::right}, {"baseline", Align::right}};
  const bool bench = r.benchmark && r.rule.perf.benchmark;
  if (bench) cols.push_back({"benchmark " + *r.benchmark, Align::right});
  Table t(cols);
  auto row = [&](std::string label, std::string a, std::string b, std::string c) {
    std::vector<std::string> cells{std::move(label), std::move(a), std::move(b)};
    if (bench) cells.push_back(std::move(c));
    t.add_row(std::move(cells));
  };
  const auto& a = r.rule;
  const auto& b = r.baseline;
  row("end value", a.perf.closing_value.fixed(2), b.perf.closing_value.fixed(2), "");
  row("return (time-weighted)", pct(a.perf.twr.period), pct(b.perf.twr.period),
      bench ? pct(a.perf.benchmark->benchmark.period) : "");
  row("annualized", pct(a.perf.twr.annualized), pct(b.perf.twr.annualized),
      bench ? pct(a.perf.benchmark->benchmark.annualized) : "");
  if (bench)
    row("excess over benchmark", pct(a.perf.benchmark->excess_arithmetic),
        pct(b.perf.benchmark->excess_arithmetic), "");
  row("volatility (annualized, daily)", pct(a.perf.risk.daily_volatility),
      pct(b.perf.risk.daily_volatility), "");
  auto dd = [](const perf::RiskFigures& rf, int part) {
    if (!rf.max_drawdown) return std::string(part == 0 ? "none" : "");
    const auto& d = *rf.max_drawdown;
    if (part == 0) return fmt::format("{:.2f}%", d.depth * 100);
    if (part == 1) return d.peak.str() + ".." + d.trough.str();
    return d.recovery ? d.recovery->str() : std::string("not yet");
  };
  row("max drawdown", dd(a.perf.risk, 0), dd(b.perf.risk, 0), "");
  row("  from peak to trough", dd(a.perf.risk, 1), dd(b.perf.risk, 1), "");
  row("  back at the peak", dd(a.perf.risk, 2), dd(b.perf.risk, 2), "");
  row("turnover per year", fmt::format("{:.1f}%", a.turnover_per_year * 100),
      fmt::format("{:.1f}%", b.turnover_per_year * 100), "");
  row("fees paid", a.fees.fixed(2), b.fees.fixed(2), "");
  row("distributions", a.distributions.fixed(2), b.distributions.fixed(2), "");
  row("names held (min/mean/max)",
      fmt::format("{}/{:.1f}/{}", a.names_min, a.names_mean, a.names_max),
      fmt::format("{}/{:.1f}/{}", b.names_min, b.names_mean, b.names_max), "");
  s += t.render(style);

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
  return s + notes_and_cautions(r.notes, r.cautions);
}

std::string backtest_curve_csv(const backtest::Result& r) {
  std::string s = "date,value,cash,names,baseline_value\n";
  for (std::size_t i = 0; i < r.rule.curve.size(); ++i) {
    const auto& c = r.rule.curve[i];
    s += fmt::format("{},{},{},{},{}\n", c.day.str(), c.value.fixed(6), c.cash.fixed(6), c.names,
                     r.baseline.curve[i].value.fixed(6));
  }
  return s;
}

std::string signal_json(const backtest::SignalResult& r) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "signal", 1);
  j.member("rule", r.rule_name).member("from", r.from.str()).member("to", r.to.str());
  j.member("sign_convention",
           "IC = Spearman(z, forward return); low z is cheap, so a rule whose cheap names do "
           "better has a negative IC");
  j.key("horizons").begin_array();
  for (const auto& h : r.horizons) {
    j.begin_object();
    j.member("months", h.months).member("days", static_cast<unsigned long long>(h.days.size()));
    j.member("mean_ic", h.mean_ic).member("t_stat", h.t_stat);
    j.member("share_expected_sign", h.share_expected_sign).member("mean_spread", h.mean_spread);
    j.key("by_day").begin_array();
    for (const auto& d : h.days) {
      j.begin_object();
      j.member("date", d.day.str()).member("end", d.end.str()).member("names", d.names);
      j.member("ic", d.ic).member("spread", d.spread);
      j.end_object();
    }
    j.end_array();
    j.end_object();
  }
  j.end_array();
  j.member("notes", r.notes).member("cautions", r.cautions);
  j.end_object();
  return s + "\n";
}

std::string signal_text(const backtest::SignalResult& r, const Style& style) {
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
  return s + notes_and_cautions(r.notes, r.cautions);
}

std::string closing_notes(const std::vector<std::string>& notes,
                          const std::vector<std::string>& cautions) {
  return notes_and_cautions(notes, cautions);
}

}  // namespace keel::report
