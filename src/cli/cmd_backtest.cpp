// keel backtest, keel signal: a rule over stored history, point in time, and
// how well its score ranks later returns. Logic lives in src/backtest/.
#include <fmt/format.h>
#include <unistd.h>

#include <charconv>
#include <cstdio>
#include <fstream>
#include <memory>
#include <nlohmann/json.hpp>

#include "backtest/backtest.h"
#include "backtest/signal.h"
#include "cli/context.h"
#include "cli/options.h"
#include "cli/print.h"
#include "core/error.h"
#include "core/text.h"
#include "report/table.h"
#include "rules/rule.h"

namespace keel::cli {
namespace {

using Json = nlohmann::ordered_json;
using report::Align;
using report::Table;

// A bar per rebalancing day on stderr, only when it is a terminal.
class Progress {
 public:
  Progress() : on_(isatty(fileno(stderr)) != 0) {}
  void operator()(std::size_t done, std::size_t total, Date day) const {
    if (!on_ || total == 0) return;
    constexpr std::size_t kWidth = 30;
    const std::size_t filled = done * kWidth / total;
    std::fprintf(stderr, "\r[%s%s] %zu/%zu %s", std::string(filled, '#').c_str(),
                 std::string(kWidth - filled, ' ').c_str(), done, total, day.str().c_str());
    if (done == total) std::fputs("\r\033[K", stderr);
    std::fflush(stderr);
  }

 private:
  bool on_;
};

struct BacktestOptions {
  std::string rule, from, to, start_value = "100000", benchmark, curve;
  bool json = false;
  bool frictionless = false;
  int rolling = 12;
};

Json drawdown_json(const perf::RiskFigures& r) {
  if (!r.max_drawdown) return Json();
  const auto& d = *r.max_drawdown;
  return {{"depth", d.depth},
          {"peak", d.peak.str()},
          {"trough", d.trough.str()},
          {"recovery", d.recovery ? Json(d.recovery->str()) : Json()}};
}

Json run_json(const backtest::StrategyRun& s) {
  const auto& p = s.perf;
  Json j;
  j["end_value"] = p.closing_value.rounded(10).str();
  j["twr"] = p.twr.period;
  j["twr_annualized"] = number(p.twr.annualized);
  j["volatility_annualized"] = number(p.risk.daily_volatility);
  j["max_drawdown"] = drawdown_json(p.risk);
  if (p.benchmark) {
    j["excess"] = p.benchmark->excess_arithmetic;
    j["excess_annualized"] = number(p.benchmark->excess_geometric_annualized);
  }
  j["turnover_per_year"] = s.turnover_per_year;
  j["fees"] = s.fees.str();
  j["distributions"] = s.distributions.rounded(10).str();
  j["names"] = {{"min", s.names_min}, {"mean", s.names_mean}, {"max", s.names_max}};
  j["rebalances"] = Json::array();
  for (const auto& r : s.rebalances) {
    Json trades = Json::array();
    for (const auto& t : r.trades)
      trades.push_back({{"symbol", t.symbol},
                        {"side", std::string(rules::to_string(t.side))},
                        {"quantity", t.quantity.str()},
                        {"price", t.price.str()},
                        {"fee", t.fee.str()}});
    j["rebalances"].push_back({{"date", r.day.str()},
                               {"passed", r.passed},
                               {"selected", r.selected},
                               {"names_after", r.names_after},
                               {"value_before", r.value_before.rounded(10).str()},
                               {"traded", r.traded.rounded(10).str()},
                               {"fees", r.fees.str()},
                               {"no_selection", r.no_selection ? Json(*r.no_selection) : Json()},
                               {"trades", trades}});
  }
  return j;
}

Json result_json(const backtest::Result& r) {
  Json j;
  j["rule"] = r.rule_name;
  j["from"] = r.from.str();
  j["to"] = r.to.str();
  j["start_value"] = r.start_value.str();
  j["frictionless"] = r.frictionless;
  j["benchmark"] = r.benchmark ? Json(*r.benchmark) : Json();
  if (r.benchmark && r.rule.perf.benchmark) {
    const auto& b = r.rule.perf.benchmark->benchmark;
    j["benchmark_twr"] = b.period;
    j["benchmark_twr_annualized"] = number(b.annualized);
  }
  j["rebalance_days"] = Json::array();
  for (Date d : r.rebalance_days) j["rebalance_days"].push_back(d.str());
  j["rule_run"] = run_json(r.rule);
  j["baseline_run"] = run_json(r.baseline);
  j["rolling"] = Json::array();
  for (const auto& w : r.rolling)
    j["rolling"].push_back({{"against", w.against},
                            {"months", w.months},
                            {"windows", w.windows},
                            {"rule_ahead", w.beat},
                            {"median_excess", number(w.median_excess)},
                            {"worst_excess", number(w.worst_excess)},
                            {"best_excess", number(w.best_excess)}});
  j["curve"] = Json::array();
  for (std::size_t i = 0; i < r.rule.curve.size(); ++i) {
    const auto& c = r.rule.curve[i];
    j["curve"].push_back({{"date", c.day.str()},
                          {"value", c.value.rounded(10).str()},
                          {"cash", c.cash.rounded(10).str()},
                          {"names", c.names},
                          {"baseline_value", r.baseline.curve[i].value.rounded(10).str()}});
  }
  j["notes"] = r.notes;
  j["cautions"] = r.cautions;
  return j;
}

std::string result_text(const backtest::Result& r, bool colour) {
  std::string s = fmt::format("Back-test of rule '{}' from {} to {} ({})\n", printable(r.rule_name),
                              r.from.str(), r.to.str(),
                              r.frictionless ? "frictionless: no fees, fractional units, fully "
                                               "invested"
                                             : "the rule's fees, bands and lot sizes");
  s += fmt::format("Start value {}; {} rebalancing days, {} to {}\n\n", r.start_value.fixed(2),
                   r.rebalance_days.size(), r.rebalance_days.front().str(),
                   r.rebalance_days.back().str());
  std::vector<Table::Column> cols{{""}, {"rule", Align::right}, {"baseline", Align::right}};
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
  s += t.render({colour});

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
  if (!r.notes.empty()) {
    s += "\nNotes:\n";
    for (const auto& n : r.notes) s += "  " + printable(n) + "\n";
  }
  s += "\nCautions:\n";
  for (const auto& c : r.cautions) s += "  - " + c + "\n";
  return s;
}

void write_curve(const std::string& path, const backtest::Result& r) {
  std::ofstream f(path, std::ios::binary | std::ios::trunc);
  if (!f) throw InputError(fmt::format("--curve: cannot write '{}'", printable(path)));
  f << "date,value,cash,names,baseline_value\n";
  for (std::size_t i = 0; i < r.rule.curve.size(); ++i) {
    const auto& c = r.rule.curve[i];
    f << c.day.str() << ',' << c.value.fixed(6) << ',' << c.cash.fixed(6) << ',' << c.names << ','
      << r.baseline.curve[i].value.fixed(6) << '\n';
  }
  if (!f) throw InputError(fmt::format("--curve: writing '{}' failed", printable(path)));
}

void add_backtest(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<BacktestOptions>();
  auto* cmd =
      app.add_subcommand("backtest",
                         "A rule month by month over stored history, point in time, next to an "
                         "equal-weight baseline");
  cmd->add_option("--rule", o->rule, "Rule file (TOML; see docs/rules.md)")->required();
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD")->required();
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD")->required();
  cmd->add_option("--start-value", o->start_value, "Cash the simulated pool starts with");
  cmd->add_option("--benchmark", o->benchmark, "A security whose closes to compare with");
  add_json_flag(*cmd, o->json);
  cmd->add_option("--curve", o->curve, "Write the daily values to this CSV file");
  cmd->add_flag("--frictionless", o->frictionless,
                "No fees, bands, minimum trade or reserve; fractional units, fully invested");
  cmd->add_option("--rolling", o->rolling, "Months held in the rolling-window table");
  cmd->callback([&ctx, o] {
    backtest::Request req;
    req.from = date_value(o->from, "--from");
    req.to = date_value(o->to, "--to");
    const auto sv = Decimal::try_parse(o->start_value);
    if (!sv)
      throw InputError(
          fmt::format("--start-value: '{}' is not a number", printable(o->start_value)));
    req.start_value = *sv;
    if (!o->benchmark.empty()) req.benchmark = o->benchmark;
    req.frictionless = o->frictionless;
    req.rolling_months = o->rolling;
    const Progress progress;
    req.progress = [&progress](std::size_t done, std::size_t total, Date day) {
      progress(done, total, day);
    };
    const auto rule = rules::load_rule(o->rule);
    auto db = ctx.open_ledger();
    const auto result = backtest::run(db, rule, req);
    if (!o->curve.empty()) write_curve(o->curve, result);
    out(o->json ? result_json(result).dump(2) + "\n" : result_text(result, ctx.colour()));
  });
}

struct SignalOptions {
  std::string rule, from, to, horizons = "1,3,6,12,24";
  bool json = false;
};

std::vector<int> horizons_option(const std::string& text) {
  std::vector<int> out;
  std::size_t start = 0;
  while (start <= text.size()) {
    const std::size_t comma = std::min(text.find(',', start), text.size());
    const std::string item = text.substr(start, comma - start);
    int v = 0;
    const auto [end, ec] = std::from_chars(item.data(), item.data() + item.size(), v);
    if (item.empty() || ec != std::errc() || end != item.data() + item.size())
      throw InputError(
          fmt::format("--horizons: '{}' is not a comma-separated list of months", printable(text)));
    out.push_back(v);
    start = comma + 1;
  }
  return out;
}

void add_signal(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<SignalOptions>();
  auto* cmd = app.add_subcommand(
      "signal",
      "How well a rule's score ranked later returns: information coefficients and "
      "the cheapest-less-dearest spread");
  cmd->add_option("--rule", o->rule, "Rule file (TOML; see docs/rules.md)")->required();
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD")->required();
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD")->required();
  cmd->add_option("--horizons", o->horizons, "Forward windows in months, comma-separated");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    backtest::SignalRequest req;
    req.from = date_value(o->from, "--from");
    req.to = date_value(o->to, "--to");
    req.horizons = horizons_option(o->horizons);
    const auto rule = rules::load_rule(o->rule);
    auto db = ctx.open_ledger();
    const auto r = backtest::signal(db, rule, req);
    if (o->json) {
      Json j;
      j["rule"] = r.rule_name;
      j["from"] = r.from.str();
      j["to"] = r.to.str();
      j["sign_convention"] =
          "IC = Spearman(z, forward return); low z is cheap, so a rule "
          "whose cheap names do better has a negative IC";
      j["horizons"] = Json::array();
      for (const auto& h : r.horizons) {
        Json days = Json::array();
        for (const auto& d : h.days)
          days.push_back({{"date", d.day.str()},
                          {"end", d.end.str()},
                          {"names", d.names},
                          {"ic", number(d.ic)},
                          {"spread", d.spread}});
        j["horizons"].push_back({{"months", h.months},
                                 {"days", h.days.size()},
                                 {"mean_ic", number(h.mean_ic)},
                                 {"t_stat", number(h.t_stat)},
                                 {"share_expected_sign", number(h.share_expected_sign)},
                                 {"mean_spread", number(h.mean_spread)},
                                 {"by_day", days}});
      }
      j["notes"] = r.notes;
      j["cautions"] = r.cautions;
      out(j.dump(2) + "\n");
      return;
    }
    std::string s = fmt::format("Signal check of rule '{}' from {} to {}\n", printable(r.rule_name),
                                r.from.str(), r.to.str());
    s += "IC = Spearman rank correlation of z with the forward total return. Low z is cheap, "
         "so a rule whose cheap names do better has a negative IC.\n\n";
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
    s += t.render({ctx.colour()});
    if (!r.notes.empty()) {
      s += "\nNotes:\n";
      for (const auto& n : r.notes) s += "  " + printable(n) + "\n";
    }
    s += "\nCautions:\n";
    for (const auto& c : r.cautions) s += "  - " + c + "\n";
    out(s);
  });
}

}  // namespace

void register_backtest_commands(CLI::App& app, Context& ctx) {
  add_backtest(app, ctx);
  add_signal(app, ctx);
}

}  // namespace keel::cli
