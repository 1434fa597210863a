// keel sweep: a rule back-tested over a grid of its settings, with the
// overfitting checks and walk-forward. Logic lives in src/backtest/sweep.*.
#include <fmt/format.h>
#include <unistd.h>

#include <cstdio>
#include <memory>
#include <optional>

#include "backtest/sweep.h"
#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "report/research_html.h"
#include "report/sweep_forms.h"
#include "rules/rule.h"

namespace keel::cli {
namespace {

struct SweepOptions {
  std::string rule, from, to, start_value = "100000", walk_forward, html;
  std::vector<std::string> vary;
  std::size_t max_variants = 200;
  bool json = false;
  bool frictionless = false;
};

// "IN:OUT" in months.
backtest::SweepRequest::WalkForward walk_forward_option(const std::string& text) {
  const auto colon = text.find(':');
  const auto what = "IN_MONTHS:OUT_MONTHS (e.g. 24:6)";
  if (colon == std::string::npos)
    throw InputError(fmt::format("--walk-forward: '{}' is not {}", printable(text), what));
  return {whole_number(text.substr(0, colon), "--walk-forward", 0, 1200, what),
          whole_number(text.substr(colon + 1), "--walk-forward", 0, 1200, what)};
}

// Variants done out of all, on standard error when it is a terminal.
void show_progress(std::size_t done, std::size_t total) {
  static const bool on = isatty(fileno(stderr)) != 0;
  if (!on || total == 0) return;
  std::fprintf(stderr, "\r%zu/%zu variants", done, total);
  if (done == total) std::fputs("\r\033[K", stderr);
  std::fflush(stderr);
}

}  // namespace

void register_sweep_command(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<SweepOptions>();
  auto* cmd = app.add_subcommand(
      "sweep",
      "A rule back-tested over a grid of its settings on one load of the history, with the "
      "odds that the best is luck");
  add_examples(*cmd, {"keel sweep --rule rule.toml --from 2019-01-01 --to 2025-12-31 --vary "
                      "select.count=5,10,20 --vary screen.max_age_days=90,180",
                      "keel sweep --rule rule.toml --from 2017-01-01 --to 2025-12-31 --vary "
                      "select.z_max=-1,-0.5,0 --walk-forward 36:12"});
  cmd->add_option("--rule", o->rule, "Rule file (TOML; see docs/rules.md; '-': standard input)")
      ->required();
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD")->required();
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD")->required();
  cmd->add_option("--vary", o->vary,
                  "A rule key and the values to try, KEY=V1,V2,... (repeat for a grid)")
      ->required();
  cmd->add_option("--max-variants", o->max_variants,
                  "Run up to this many variants (default 200; more is refused)");
  cmd->add_option("--walk-forward", o->walk_forward,
                  "IN:OUT months: choose the best variant on each IN months, run it on the next "
                  "OUT");
  cmd->add_option("--start-value", o->start_value, "Cash each simulated pool starts with");
  cmd->add_flag("--frictionless", o->frictionless,
                "No fees, bands, minimum trade or reserve; fractional units, fully invested");
  cmd->add_option("--html", o->html,
                  "Also write the report with its charts as one self-contained HTML page ('-': "
                  "standard output, with the report on standard error)");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    one_on_standard_output({{"--html", &o->html}}, o->json);
    backtest::SweepRequest req;
    req.from = date_value(o->from, "--from");
    req.to = date_value(o->to, "--to");
    req.start_value = decimal_value(o->start_value, "--start-value");
    req.frictionless = o->frictionless;
    req.max_variants = o->max_variants;
    for (const auto& v : o->vary) req.axes.push_back(backtest::parse_axis(v));
    if (!o->walk_forward.empty()) req.walk_forward = walk_forward_option(o->walk_forward);
    req.progress = show_progress;
    const auto rule = rules::load_rule(o->rule);
    std::optional<OutputFile> html;
    if (!o->html.empty()) html.emplace(o->html, OutputOptions{"--html"});
    auto db = ctx.open_ledger();
    const auto result = backtest::sweep(db, rule, req);
    if (html) {
      html->write(report::sweep_html(result));
      html->commit();
      if (html->to_stdout()) {
        std::fputs(report::sweep_text(result, report::terminal_style(stderr)).c_str(), stderr);
        return;
      }
    }
    if (o->json) {
      out(report::sweep_json(result));
      return;
    }
    out(report::sweep_text(result, ctx.style()));
    if (html) out(fmt::format("wrote HTML page {}\n", printable(o->html)));
  });
}

}  // namespace keel::cli
