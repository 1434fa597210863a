#include "backtest/compare.h"

#include <fmt/format.h>

#include <algorithm>

#include "core/error.h"
#include "core/text.h"

namespace keel::backtest {
namespace {

// Calendar months lying whole inside [from, to].
int complete_months(Date from, Date to) {
  int n = 0;
  for (Date m = Date::from_ymd(from.year(), from.month(), 1); m.month_end() <= to;
       m = m.plus_months(1))
    if (m >= from) ++n;
  return n;
}

std::vector<std::string> labels_of(const std::vector<rules::Rule>& rules) {
  std::vector<std::string> out;
  for (const auto& r : rules) {
    const bool repeated = std::count_if(rules.begin(), rules.end(),
                                        [&](const rules::Rule& o) { return o.name == r.name; }) > 1;
    out.push_back(repeated ? fmt::format("{} ({})", r.name, r.source) : r.name);
  }
  return out;
}

}  // namespace

void check_compare_request(std::size_t count, const Request& req) {
  if (count < 2)
    throw InputError(
        "RULES: a comparison needs two rule files or more (one rule alone: keel backtest)");
  if (req.rolling_months < 1 || req.rolling_months > 600)
    throw InputError(fmt::format("--hold-months: {} is not a number of months from 1 to 600",
                                 req.rolling_months));
  if (req.from <= req.to) {
    const int complete = complete_months(req.from, req.to);
    if (req.rolling_months > complete)
      throw InputError(fmt::format(
          "--hold-months: {} months is longer than the {} complete months from {} to {}",
          req.rolling_months, complete, req.from.str(), req.to.str()));
  }
}

CompareResult compare(store::Database& db, const std::vector<rules::Rule>& rules,
                      const Request& request) {
  check_compare_request(rules.size(), request);
  std::vector<std::string> extra;
  if (request.benchmark) extra.push_back(*request.benchmark);
  const History h =
      load_history(db, rules, request.from.plus_days(-1), request.to, extra, rules::Convert::yes);
  return compare(h, rules, request);
}

CompareResult compare(const History& h, const std::vector<rules::Rule>& rules,
                      const Request& request) {
  check_compare_request(rules.size(), request);
  CompareResult out;
  out.from = request.from;
  out.to = request.to;
  out.start_value = request.start_value;
  out.frictionless = request.frictionless;
  out.benchmark = request.benchmark;
  out.hold_months = request.rolling_months;
  out.labels = labels_of(rules);
  out.notes = h.notes;
  for (std::size_t i = 0; i < rules.size(); ++i) {
    Request req = request;
    req.baseline = i == 0;
    out.runs.push_back(run(h, rules[i], req));
    // After the history's own notes come the run's, told for its rule.
    const auto& notes = out.runs.back().notes;
    for (std::size_t k = h.notes.size(); k < notes.size(); ++k)
      out.notes.push_back(fmt::format("{}: {}", out.labels[i], notes[k]));
  }
  const Result& first = out.runs.front();
  const auto& months = first.rule.perf.months;

  // Monthly returns of every series, aligned: the rules, the baseline, the benchmark.
  std::vector<std::vector<std::optional<double>>> monthly;
  for (std::size_t i = 0; i < out.runs.size(); ++i) {
    out.series.push_back(out.labels[i]);
    monthly.push_back(monthly_returns(out.runs[i].rule));
  }
  out.series.push_back("baseline");
  monthly.push_back(monthly_returns(first.baseline));
  if (out.benchmark) {
    out.series.push_back("benchmark " + *out.benchmark);
    monthly.push_back(benchmark_monthly_returns(first.rule));
  }
  std::vector<std::vector<std::optional<double>>> windows;
  for (const auto& m : monthly) windows.push_back(perf::window_returns(m, out.hold_months));
  // A start counts when every series has its window (they share their months).
  out.returns.resize(windows.size());
  for (std::size_t s = 0; s < windows.front().size(); ++s) {
    if (!std::all_of(windows.begin(), windows.end(),
                     [&](const auto& w) { return w[s].has_value(); }))
      continue;
    out.starts.push_back(months[s].first);
    for (std::size_t k = 0; k < windows.size(); ++k) out.returns[k].push_back(*windows[k][s]);
  }
  // Each rule against the benchmark, the baseline, and every other rule.
  for (std::size_t i = 0; i < out.runs.size(); ++i) {
    std::vector<std::size_t> others;
    if (out.benchmark) others.push_back(out.series.size() - 1);
    others.push_back(out.runs.size());
    for (std::size_t j = 0; j < out.runs.size(); ++j)
      if (j != i) others.push_back(j);
    for (const std::size_t j : others)
      out.pairings.push_back(Pairing{i, j, perf::compare_returns(windows[i], windows[j])});
  }
  if (out.benchmark) {
    std::vector<std::pair<std::string, const StrategyRun*>> runs;
    for (std::size_t i = 0; i < out.runs.size(); ++i)
      runs.emplace_back(out.labels[i], &out.runs[i].rule);
    runs.emplace_back("baseline", &first.baseline);
    out.down_markets = down_markets(runs, first.benchmark_curve, *out.benchmark, out.hold_months);
  }
  out.cautions = backtest_cautions();
  out.cautions.insert(out.cautions.begin(),
                      "Comparing rules is itself a search: the more rules are tried on the same "
                      "past, the likelier the best of them looks good by luck alone.");
  return out;
}

}  // namespace keel::backtest
