// keel returns: time- and money-weighted returns, risk and a monthly table
// for one account or the whole ledger.
#include <fmt/format.h>

#include <memory>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/memory.h"
#include "perf/returns_report.h"
#include "report/returns_forms.h"

namespace keel::cli {
namespace {

struct ReturnsOptions {
  std::string account, from, to, year, period, as_of, benchmark, method = "daily", risk_free,
                                                                 currency;
  bool monthly = false;
  bool local = false;
  bool json = false;
};

void add_returns(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ReturnsOptions>();
  auto* cmd = app.add_subcommand(
      "returns", "Time- and money-weighted returns, risk and a monthly table over a period");
  add_examples(*cmd, {"keel returns --year 2025 --benchmark ZXTR --local",
                      "keel returns --period 3y --monthly"});
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
  add_currency_option(*cmd, o->currency);
  cmd->add_flag("--local", o->local,
                "Also each account's time- and money-weighted returns in its own currency");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    keep_freed_memory();  // core/memory.h: the report builds and drops large series
    if (o->method != "daily" && o->method != "dietz")
      throw InputError(
          fmt::format("--method: '{}' is not a method; choose daily or dietz", o->method));
    if (o->local && o->monthly)
      throw InputError(
          "--local: gives each account's returns over the whole period, not month by month; "
          "leave out --monthly");
    perf::ReturnsRequest request;
    request.local = o->local;
    request.account = text_option(o->account);
    request.period.from = date_option(o->from, "--from");
    request.period.to = date_option(o->to, "--to");
    if (!o->year.empty())
      request.period.year = whole_number(o->year, "--year", 1, 9999, "a calendar year (1 to 9999)");
    request.period.period = text_option(o->period);
    request.as_of = date_option(o->as_of, "--as-of");
    request.benchmark = text_option(o->benchmark);
    request.currency = currency_option(o->currency);
    if (!o->risk_free.empty()) {
      const auto rate = Decimal::try_parse(o->risk_free);
      if (!rate || *rate <= Decimal(-1))
        throw InputError(fmt::format(
            "--risk-free: '{}' is not a rate; give an annual fraction above -1, e.g. 0.02",
            o->risk_free));
      request.risk_free_annual = *rate;
    }
    auto db = ctx.open_ledger();
    const auto rep =
        with_currency_option(request.currency, [&] { return perf::returns_report(db, request); });
    out(o->json ? report::returns_json(rep, o->method, o->monthly)
                : report::returns_text(rep, o->method, o->monthly, ctx.style()));
  });
}

}  // namespace

void register_returns_commands(CLI::App& app, Context& ctx) {
  add_returns(app, ctx);
}

}  // namespace keel::cli
