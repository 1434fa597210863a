// keel returns: time- and money-weighted returns, risk and a monthly table
// for one account or the whole ledger.
#include <fmt/format.h>

#include <memory>
#include <nlohmann/json.hpp>

#include "cli/context.h"
#include "cli/options.h"
#include "cli/print.h"
#include "core/error.h"
#include "io/json.h"
#include "perf/returns_report.h"
#include "report/json_schema.h"
#include "report/table.h"

namespace keel::cli {
namespace {

using Json = nlohmann::ordered_json;
using report::Align;
using report::Table;

constexpr const char* kCaution =
    "Past results do not predict future returns; these figures describe what happened, not what "
    "will.\n";

struct ReturnsOptions {
  std::string account, from, to, year, period, as_of, benchmark, method = "daily", risk_free;
  bool monthly = false;
  bool json = false;
};

std::string mwr_words(const perf::MwrSolution& m) {
  switch (m.status) {
    case perf::MwrStatus::kOk:
      return "";
    case perf::MwrStatus::kNoCashFlows:
      return "no money-weighted return: the period has no value and no flows";
    case perf::MwrStatus::kNoRoot:
      return "no money-weighted return: no rate makes the flows and values balance";
    case perf::MwrStatus::kMultipleRoots:
      return fmt::format(
          "no single money-weighted return: {} different rates balance the flows and values",
          m.roots.size());
  }
  return "";
}

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

Json to_json(const perf::ReturnsReport& rep, const std::string& method, bool monthly) {
  const auto& r = rep.result;
  const Figures f = figures(r, method == "dietz");
  Json j = report::json_document("returns", 1);
  j["from"] = r.from.str();
  j["to"] = r.to.str();
  j["scope"] = rep.scope;
  j["method"] = method;
  j["opening_value"] = r.opening_value.str();
  j["closing_value"] = r.closing_value.str();
  j["inflows"] = r.inflow.str();
  j["outflows"] = r.outflow.str();
  j["income"] = rep.income.str();
  j["fees"] = rep.fees.str();
  j["twr"] = number(f.twr);
  j["twr_annualized"] = number(f.twr_annualized);
  j["mwr_annualized"] = number(f.mwr_annualized);
  j["mwr_period"] = number(f.mwr_period);
  if (r.mwr.status != perf::MwrStatus::kOk) j["mwr_status"] = perf::to_string(r.mwr.status);
  if (r.benchmark && rep.benchmark) {
    j["benchmark"] = {{"symbol", *rep.benchmark},
                      {"return", r.benchmark->benchmark.period},
                      {"return_annualized", number(r.benchmark->benchmark.annualized)}};
    j["excess_arithmetic"] = r.benchmark->excess_arithmetic;
    j["excess_geometric"] = r.benchmark->excess_geometric;
  } else {
    j["benchmark"] = nullptr;
    j["excess_arithmetic"] = nullptr;
    j["excess_geometric"] = nullptr;
  }
  j["volatility_daily_annualized"] = number(r.risk.daily_volatility);
  j["volatility_monthly_annualized"] = number(r.risk.monthly_volatility);
  if (r.risk.max_drawdown) {
    j["max_drawdown"] = r.risk.max_drawdown->depth;
    j["max_drawdown_from"] = r.risk.max_drawdown->peak.str();
    j["max_drawdown_to"] = r.risk.max_drawdown->trough.str();
  } else {
    // No fall at all is a drawdown of zero; with no observations it is undefined.
    j["max_drawdown"] = r.risk.daily_observations > 0 ? Json(0.0) : Json();
    j["max_drawdown_from"] = nullptr;
    j["max_drawdown_to"] = nullptr;
  }
  j["tracking_error"] = r.benchmark ? number(r.benchmark->tracking_error) : Json();
  j["sharpe"] = number(r.risk.sharpe);
  if (monthly) {
    j["months"] = Json::array();
    for (const auto& m : r.months)
      j["months"].push_back({{"month", fmt::format("{:04}-{:02}", m.year, m.month)},
                             {"first", m.first.str()},
                             {"last", m.last.str()},
                             {"complete", m.complete},
                             {"opening_value", m.opening_value.str()},
                             {"closing_value", m.closing_value.str()},
                             {"inflows", m.inflow.str()},
                             {"outflows", m.outflow.str()},
                             {"twr", m.twr},
                             {"modified_dietz", number(m.modified_dietz)},
                             {"benchmark", number(m.benchmark)}});
  }
  return j;
}

std::string summary_table(const perf::ReturnsReport& rep, const std::string& method,
                          const report::Style& style) {
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
  if (r.mwr.status != perf::MwrStatus::kOk) text += mwr_words(r.mwr) + "\n";
  if (!r.twr.annualized) text += "Periods shorter than 365 days are not annualized.\n";
  if (!r.risk.sharpe)
    text += "Sharpe ratio needs --risk-free, a period of a year or more and monthly volatility.\n";
  return text;
}

std::string monthly_table(const perf::ReturnsReport& rep, const report::Style& style) {
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

void add_returns(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ReturnsOptions>();
  auto* cmd = app.add_subcommand(
      "returns", "Time- and money-weighted returns, risk and a monthly table over a period");
  add_examples(*cmd,
               {"keel returns --year 2025 --benchmark ZXTR", "keel returns --period 3y --monthly"});
  add_account_option(*cmd, o->account, "Only this account (default: the whole ledger)");
  cmd->add_option("--from", o->from, "First day of the period, YYYY-MM-DD");
  cmd->add_option("--to", o->to, "Last day of the period, YYYY-MM-DD");
  cmd->add_option("--year", o->year, "One calendar year");
  cmd->add_option("--period", o->period,
                  "mtd, qtd, ytd, 1y, 3y, 5y, 10y or inception, ending on the as-of day");
  cmd->add_option("--as-of", o->as_of,
                  "Day the period words count back from (default: the latest close or "
                  "transaction)");
  cmd->add_option("--benchmark", o->benchmark, "Compare with the closes of this security");
  cmd->add_option("--method", o->method,
                  "daily (true time-weighted) or dietz (Modified Dietz, monthly linked)");
  cmd->add_option("--risk-free", o->risk_free,
                  "Annual risk-free rate as a fraction (0.02 = 2 %), for the Sharpe ratio");
  cmd->add_flag("--monthly", o->monthly, "Show the month-by-month table");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    if (o->method != "daily" && o->method != "dietz")
      throw InputError(
          fmt::format("--method: '{}' is not a method; choose daily or dietz", o->method));
    perf::ReturnsRequest request;
    request.account = text_option(o->account);
    request.period.from = date_option(o->from, "--from");
    request.period.to = date_option(o->to, "--to");
    if (!o->year.empty())
      request.period.year = whole_number(o->year, "--year", 1, 9999, "a calendar year (1 to 9999)");
    request.period.period = text_option(o->period);
    request.as_of = date_option(o->as_of, "--as-of");
    request.benchmark = text_option(o->benchmark);
    if (!o->risk_free.empty()) {
      const auto rate = Decimal::try_parse(o->risk_free);
      if (!rate || *rate <= Decimal(-1))
        throw InputError(fmt::format(
            "--risk-free: '{}' is not a rate; give an annual fraction above -1, e.g. 0.02",
            o->risk_free));
      request.risk_free_annual = *rate;
    }
    auto db = ctx.open_ledger();
    const auto rep = perf::returns_report(db, request);
    if (o->json) {
      out(io::dump_json(to_json(rep, o->method, o->monthly)) + "\n");
      return;
    }
    out(fmt::format("Returns of {} from {} to {} ({} days)\n\n", rep.scope, rep.result.from.str(),
                    rep.result.to.str(), rep.result.days));
    out(o->monthly ? monthly_table(rep, ctx.style()) : summary_table(rep, o->method, ctx.style()));
    if (rep.period.clamped)
      out(fmt::format("The ledger starts on {}; the period starts there.\n", rep.inception.str()));
    if (!rep.unpriced.empty())
      out(fmt::format("Held without any close or trade price, valued at zero: {}\n",
                      fmt::join(rep.unpriced, ", ")));
    out(kCaution);
  });
}

}  // namespace

void register_returns_commands(CLI::App& app, Context& ctx) {
  add_returns(app, ctx);
}

}  // namespace keel::cli
