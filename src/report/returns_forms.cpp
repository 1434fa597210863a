#include "report/returns_forms.h"

#include <fmt/format.h>

#include "core/json.h"
#include "report/format.h"
#include "report/json_schema.h"
#include "report/table.h"

namespace keel::report {
namespace {

constexpr const char* kCaution =
    "Past results do not predict future returns; these figures describe what happened, not what "
    "will.\n";

struct Figures {
  std::optional<double> twr, twr_annualized, mwr_annualized, mwr_period;
};

Figures figures(const perf::PerfResult& r, bool dietz) {
  Figures f;
  if (dietz) {
    if (r.modified_dietz) {
      f.twr = r.modified_dietz->period;
      f.twr_annualized = r.modified_dietz->annualized;
    }
  } else {
    f.twr = r.twr.period;
    f.twr_annualized = r.twr.annualized;
  }
  if (r.mwr.status == perf::MwrStatus::kOk && r.mwr_figure) {
    f.mwr_annualized = r.mwr_figure->annualized;
    f.mwr_period = r.mwr_figure->period;
  }
  return f;
}

std::string summary_table(const perf::ReturnsReport& rep, const std::string& method,
                          const Style& style) {
  const auto& r = rep.result;
  const Figures f = figures(r, method == "dietz");
  const std::string twr_name = method == "dietz" ? "time-weighted (Modified Dietz, monthly linked)"
                                                 : "time-weighted (daily)";
  Table t({{"figure"}, {"period", Align::right}, {"a year", Align::right}});
  t.add_row({"opening value", money(r.opening_value), ""});
  t.add_row({"inflows", money(r.inflow), ""});
  t.add_row({"outflows", money(r.outflow), ""});
  t.add_row({"income (dividends, interest)", money(rep.income), ""});
  t.add_row({"tax", money(rep.tax), ""});
  t.add_row({"fees", money(rep.fees), ""});
  t.add_row({"closing value", money(r.closing_value), ""});
  t.add_rule();
  t.add_row({twr_name, pct(f.twr), pct(f.twr_annualized)});
  if (r.mwr.status == perf::MwrStatus::kOk)
    t.add_row({"money-weighted", pct(f.mwr_period), pct(f.mwr_annualized)});
  if (r.benchmark && rep.benchmark) {
    t.add_row({"benchmark " + *rep.benchmark, pct(r.benchmark->benchmark.period),
               pct(r.benchmark->benchmark.annualized)});
    t.add_row({"excess, arithmetic", pct(r.benchmark->excess_arithmetic),
               pct(r.benchmark->excess_arithmetic_annualized)});
    t.add_row({"excess, geometric", pct(r.benchmark->excess_geometric),
               pct(r.benchmark->excess_geometric_annualized)});
    t.add_row({"tracking error", "", pct(r.benchmark->tracking_error)});
  }
  t.add_rule();
  t.add_row({"volatility, daily returns", "", pct(r.risk.daily_volatility)});
  t.add_row({"volatility, monthly returns", "", pct(r.risk.monthly_volatility)});
  if (r.risk.max_drawdown)
    t.add_row({fmt::format("max drawdown ({} to {})", r.risk.max_drawdown->peak.str(),
                           r.risk.max_drawdown->trough.str()),
               pct(r.risk.max_drawdown->depth), ""});
  else
    t.add_row({"max drawdown", r.risk.daily_observations > 0 ? "0.00%" : "n/a", ""});
  t.add_row({"Sharpe ratio", "", r.risk.sharpe ? fmt::format("{:.2f}", *r.risk.sharpe) : "n/a"});
  std::string text = t.render(style);
  if (r.mwr.status != perf::MwrStatus::kOk) text += perf::mwr_words(r.mwr) + "\n";
  if (!r.twr.annualized) text += "Periods shorter than 365 days are not annualized.\n";
  if (!r.risk.sharpe)
    text += "Sharpe ratio needs --risk-free, a period of a year or more and monthly volatility.\n";
  return text;
}

std::string monthly_table(const perf::ReturnsReport& rep, const Style& style) {
  const auto& r = rep.result;
  std::vector<Table::Column> cols{{"month"},
                                  {"opening", Align::right},
                                  {"inflows", Align::right, false, 2},
                                  {"outflows", Align::right, false, 1},
                                  {"closing", Align::right},
                                  {"time-weighted", Align::right},
                                  {"Modified Dietz", Align::right}};
  if (rep.benchmark) cols.push_back({"benchmark", Align::right});
  Table t(std::move(cols));
  bool partial = false;
  for (const auto& m : r.months) {
    partial |= !m.complete;
    std::vector<std::string> row{
        fmt::format("{:04}-{:02}{}", m.year, m.month, m.complete ? "" : "*"),
        money(m.opening_value),
        money(m.inflow),
        money(m.outflow),
        money(m.closing_value),
        pct(m.twr),
        pct(m.modified_dietz)};
    if (rep.benchmark) row.push_back(pct(m.benchmark));
    t.add_row(std::move(row));
  }
  std::string text = t.render(style);
  if (partial) text += "* part of the month lies outside the period\n";
  return text;
}

// Each account's figures in its own currency (--local), by the same method.
std::string local_table(const perf::ReturnsReport& rep, const std::string& method,
                        const Style& style) {
  Table t({{"account", Align::left, true},
           {"currency"},
           {"opening value", Align::right, false, 2},
           {"closing value", Align::right, false, 1},
           {"time-weighted", Align::right},
           {"a year", Align::right},
           {"money-weighted", Align::right},
           {"a year", Align::right}});
  for (const auto& l : rep.local) {
    const Figures f = figures(l.result, method == "dietz");
    t.add_row({l.account, l.currency, money(l.result.opening_value), money(l.result.closing_value),
               pct(f.twr), pct(f.twr_annualized),
               l.result.mwr.status == perf::MwrStatus::kOk ? pct(f.mwr_period) : "n/a",
               pct(f.mwr_annualized)});
  }
  return "\nIn each account's own currency:\n" + t.render(style);
}

}  // namespace

std::string returns_json(const perf::ReturnsReport& rep, const std::string& method, bool monthly) {
  const auto& r = rep.result;
  const Figures f = figures(r, method == "dietz");
  std::string s;
  JsonWriter j(s);
  begin_document(j, "returns", 3);
  j.member("from", r.from.str()).member("to", r.to.str()).member("scope", rep.scope);
  j.member("currency", rep.currency);
  j.member("method", method);
  j.member("opening_value", r.opening_value).member("closing_value", r.closing_value);
  j.member("inflows", r.inflow).member("outflows", r.outflow);
  j.member("income", rep.income).member("fees", rep.fees);
  j.member("twr", f.twr).member("twr_annualized", f.twr_annualized);
  j.member("mwr_annualized", f.mwr_annualized).member("mwr_period", f.mwr_period);
  if (r.mwr.status != perf::MwrStatus::kOk)
    j.member("mwr_status", std::string(perf::to_string(r.mwr.status)));
  if (r.benchmark && rep.benchmark) {
    j.key("benchmark").begin_object();
    j.member("symbol", *rep.benchmark).member("return", r.benchmark->benchmark.period);
    j.member("converted_from", rep.benchmark_converted_from);
    j.member("return_annualized", r.benchmark->benchmark.annualized);
    j.end_object();
    j.member("excess_arithmetic", r.benchmark->excess_arithmetic);
    j.member("excess_geometric", r.benchmark->excess_geometric);
  } else {
    j.key("benchmark").null().key("excess_arithmetic").null().key("excess_geometric").null();
  }
  j.member("volatility_daily_annualized", r.risk.daily_volatility);
  j.member("volatility_monthly_annualized", r.risk.monthly_volatility);
  if (r.risk.max_drawdown) {
    j.member("max_drawdown", r.risk.max_drawdown->depth);
    j.member("max_drawdown_from", r.risk.max_drawdown->peak.str());
    j.member("max_drawdown_to", r.risk.max_drawdown->trough.str());
  } else {
    // No fall at all is a drawdown of zero; with no observations it is undefined.
    j.key("max_drawdown");
    if (r.risk.daily_observations > 0)
      j.value(0.0);
    else
      j.null();
    j.key("max_drawdown_from").null().key("max_drawdown_to").null();
  }
  j.key("tracking_error");
  if (r.benchmark)
    j.value(r.benchmark->tracking_error);
  else
    j.null();
  j.member("sharpe", r.risk.sharpe);
  if (!rep.local.empty()) {
    j.key("local").begin_array();
    for (const auto& l : rep.local) {
      const Figures lf = figures(l.result, method == "dietz");
      j.begin_object();
      j.member("account", l.account).member("currency", l.currency);
      j.member("opening_value", l.result.opening_value);
      j.member("closing_value", l.result.closing_value);
      j.member("inflows", l.result.inflow).member("outflows", l.result.outflow);
      j.member("twr", lf.twr).member("twr_annualized", lf.twr_annualized);
      j.member("mwr_annualized", lf.mwr_annualized).member("mwr_period", lf.mwr_period);
      if (l.result.mwr.status != perf::MwrStatus::kOk)
        j.member("mwr_status", std::string(perf::to_string(l.result.mwr.status)));
      j.end_object();
    }
    j.end_array();
  }
  if (monthly) {
    j.key("months").begin_array();
    for (const auto& m : r.months) {
      j.begin_object();
      j.member("month", fmt::format("{:04}-{:02}", m.year, m.month));
      j.member("first", m.first.str()).member("last", m.last.str());
      j.member("complete", m.complete);
      j.member("opening_value", m.opening_value).member("closing_value", m.closing_value);
      j.member("inflows", m.inflow).member("outflows", m.outflow);
      j.member("twr", m.twr).member("modified_dietz", m.modified_dietz);
      j.member("benchmark", m.benchmark);
      j.end_object();
    }
    j.end_array();
  }
  j.end_object();
  return s + "\n";
}

std::string returns_text(const perf::ReturnsReport& rep, const std::string& method, bool monthly,
                         const Style& style) {
  std::string s =
      fmt::format("Returns of {} in {} from {} to {} ({} days)\n\n", rep.scope, rep.currency,
                  rep.result.from.str(), rep.result.to.str(), rep.result.days);
  s += monthly ? monthly_table(rep, style) : summary_table(rep, method, style);
  if (!rep.local.empty()) s += local_table(rep, method, style);
  if (rep.period.clamped)
    s += fmt::format("The ledger starts on {}; the period starts there.\n", rep.inception.str());
  if (rep.benchmark && rep.benchmark_converted_from)
    s += fmt::format(
        "The benchmark {} trades in {}: its closes are converted into {} at each day's rate, "
        "unhedged, so its return includes the currency's move.\n",
        *rep.benchmark, *rep.benchmark_converted_from, rep.currency);
  if (!rep.unpriced.empty())
    s += fmt::format("Held without any close or trade price, valued at zero: {}\n",
                     fmt::join(rep.unpriced, ", "));
  return s + kCaution;
}

}  // namespace keel::report
