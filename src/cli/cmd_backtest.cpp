// keel backtest, keel signal: a rule over stored history, point in time, and
// how well its score ranks later returns. Logic lives in src/backtest/.
#include <fmt/format.h>
#include <unistd.h>

#include <charconv>
#include <cstdio>
#include <filesystem>
#include <functional>
#include <memory>
#include <optional>

#include "backtest/backtest.h"
#include "backtest/compare.h"
#include "backtest/signal.h"
#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "report/backtest_forms.h"
#include "report/compare_forms.h"
#include "report/research_html.h"
#include "report/table.h"
#include "rules/rule.h"

namespace keel::cli {
namespace {

// A bar per rebalancing day on stderr, only when it is a terminal.
class DayProgress {
 public:
  DayProgress() : on_(isatty(fileno(stderr)) != 0) {}
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

// What a back-test and a comparison share.
struct RunOptions {
  std::string from, to, start_value = "100000", benchmark, curve, html;
  bool json = false;
  bool frictionless = false;
};

struct BacktestOptions : RunOptions {
  std::string rule;
  int rolling = 12;
};

backtest::Request run_request(const RunOptions& o, const DayProgress& progress) {
  backtest::Request req;
  req.from = date_value(o.from, "--from");
  req.to = date_value(o.to, "--to");
  req.start_value = decimal_value(o.start_value, "--start-value");
  if (!o.benchmark.empty()) req.benchmark = o.benchmark;
  req.frictionless = o.frictionless;
  req.progress = [&progress](std::size_t done, std::size_t total, Date day) {
    progress(done, total, day);
  };
  one_on_standard_output({{"--curve", &o.curve}, {"--html", &o.html}}, o.json);
  return req;
}

// A command's files, opened (and so checked) before the run and written after it.
struct Outputs {
  std::optional<OutputFile> curve, html;
  // A file on standard output: the report goes to standard error.
  bool report_to_stderr() const {
    return (curve && curve->to_stdout()) || (html && html->to_stdout());
  }
};

void open_file(std::optional<OutputFile>& file, const std::string& path, const char* option) {
  if (!path.empty()) file.emplace(path, OutputOptions{option});
}

// The --curve and --html files of a run.
void open_files(Outputs& files, const RunOptions& o) {
  open_file(files.curve, o.curve, "--curve");
  open_file(files.html, o.html, "--html");
}

void write_file(std::optional<OutputFile>& file, const std::function<std::string()>& content) {
  if (!file) return;
  file->write(content());
  file->commit();
}

// The report (text or JSON), then a line naming the page written.
void show(const Outputs& files, bool json,
          const std::function<std::string(const report::Style&)>& text,
          const std::function<void()>& json_out) {
  std::string line;
  if (files.html && !files.html->to_stdout() && !json)
    line = fmt::format("wrote HTML page {}\n", printable(files.html->target().string()));
  if (files.report_to_stderr()) {
    std::fputs((text(report::terminal_style(stderr)) + line).c_str(), stderr);
    return;
  }
  if (json)
    json_out();
  else
    out(text(report::terminal_style(stdout)) + line);
}

void add_html_option(CLI::App& cmd, std::string& html) {
  cmd.add_option("--html", html,
                 "Also write the report with its charts as one self-contained HTML page ('-': "
                 "standard output, with the report on standard error)");
}

void add_backtest(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<BacktestOptions>();
  auto* cmd =
      app.add_subcommand("backtest",
                         "A rule month by month over stored history, point in time, next to an "
                         "equal-weight baseline");
  add_examples(*cmd,
               {"keel backtest --rule rule.toml --from 2019-01-01 --to 2025-12-31 --benchmark ZXTR",
                "keel backtest --rule rule.toml --from 2019-01-01 --to 2025-12-31 --frictionless "
                "--curve curve.csv"});
  cmd->add_option("--rule", o->rule, "Rule file (TOML; see docs/rules.md; '-': standard input)")
      ->required();
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD")->required();
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD")->required();
  cmd->add_option("--start-value", o->start_value, "Cash the simulated pool starts with");
  cmd->add_option("--benchmark", o->benchmark, "A security whose closes to compare with");
  add_json_flag(*cmd, o->json);
  cmd->add_option("--curve", o->curve,
                  "Write the daily values to this CSV file ('-': standard output, with the report "
                  "on standard error)");
  add_html_option(*cmd, o->html);
  cmd->add_flag("--frictionless", o->frictionless,
                "No fees, bands, minimum trade or reserve; fractional units, fully invested");
  cmd->add_option("--rolling", o->rolling, "Months held in the rolling-window table");
  cmd->callback([&ctx, o] {
    const DayProgress progress;
    auto req = run_request(*o, progress);
    req.keep_trades = o->json;  // the text report lists no trades
    req.rolling_months = o->rolling;
    const auto rule = rules::load_rule(o->rule);
    Outputs files;
    open_files(files, *o);
    auto db = ctx.open_ledger();
    const auto result = backtest::run(db, rule, req);
    write_file(files.curve, [&] { return report::backtest_curve_csv(result); });
    write_file(files.html, [&] { return report::backtest_html(result); });
    show(
        files, o->json,
        [&](const report::Style& style) { return report::backtest_text(result, style); },
        [&] { report::backtest_json(result, out); });
  });
}

struct CompareOptions : RunOptions {
  std::vector<std::string> rules;
  int hold_months = 24;
};

// Two rule files or more, none given twice (the same file under two names too).
std::vector<rules::Rule> compare_rules(const std::vector<std::string>& files) {
  std::vector<std::filesystem::path> seen;
  for (const auto& f : files) {
    std::error_code ec;
    auto canonical =
        f == "-" ? std::filesystem::path("-") : std::filesystem::weakly_canonical(f, ec);
    if (ec) canonical = f;
    for (std::size_t i = 0; i < seen.size(); ++i) {
      if (seen[i] != canonical) continue;
      if (files[i] == f) throw InputError(fmt::format("RULES: '{}' is given twice", printable(f)));
      throw InputError(
          fmt::format("RULES: '{}' is the same file as '{}'", printable(f), printable(files[i])));
    }
    seen.push_back(canonical);
  }
  std::vector<rules::Rule> out;
  for (const auto& f : files) out.push_back(rules::load_rule(f));
  return out;
}

void add_compare(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<CompareOptions>();
  auto* cmd = app.add_subcommand(
      "compare",
      "Several rules back-tested over the same period, data and start value, side by side, "
      "held from the start of any month, and in down markets");
  add_examples(*cmd, {"keel compare low_pe.toml high_yield.toml --from 2019-01-01 --to 2025-12-31 "
                      "--benchmark ZXTR",
                      "keel compare a.toml b.toml c.toml --from 2019-01-01 --to 2025-12-31 "
                      "--hold-months 36 --curve curves.csv"});
  cmd->add_option("RULES", o->rules,
                  "Rule files (TOML; see docs/rules.md), two or more; one may be '-' (standard "
                  "input)")
      ->required();
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD")->required();
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD")->required();
  cmd->add_option("--start-value", o->start_value, "Cash each simulated pool starts with");
  cmd->add_option("--benchmark", o->benchmark,
                  "A security whose closes to compare with (and to tell down markets by)");
  cmd->add_option("--hold-months", o->hold_months,
                  "Months held from the start of any complete month (default 24)");
  add_json_flag(*cmd, o->json);
  cmd->add_option("--curve", o->curve,
                  "Write every run's daily values to this CSV file ('-': standard output, with "
                  "the report on standard error)");
  add_html_option(*cmd, o->html);
  cmd->add_flag("--frictionless", o->frictionless,
                "No fees, bands, minimum trade or reserve; fractional units, fully invested");
  cmd->callback([&ctx, o] {
    const DayProgress progress;
    auto req = run_request(*o, progress);
    req.keep_trades = false;  // a comparison lists no trades
    req.rolling_months = o->hold_months;
    backtest::check_compare_request(o->rules.size(), req);
    const auto rules = compare_rules(o->rules);
    Outputs files;
    open_files(files, *o);
    auto db = ctx.open_ledger();
    const auto result = backtest::compare(db, rules, req);
    write_file(files.curve, [&] { return report::compare_curve_csv(result); });
    write_file(files.html, [&] { return report::compare_html(result); });
    show(
        files, o->json,
        [&](const report::Style& style) { return report::compare_text(result, style); },
        [&] { out(report::compare_json(result)); });
  });
}

struct SignalOptions {
  std::string rule, from, to, horizons = "1,3,6,12,24", html;
  bool json = false, by_name = false;
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
  add_examples(
      *cmd, {"keel signal --rule rule.toml --from 2017-01-01 --to 2025-12-31 --horizons 1,3,12"});
  cmd->add_option("--rule", o->rule, "Rule file (TOML; see docs/rules.md; '-': standard input)")
      ->required();
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD")->required();
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD")->required();
  cmd->add_option("--horizons", o->horizons, "Forward windows in months, comma-separated");
  cmd->add_flag("--by-name", o->by_name,
                "Also each name's track record per horizon: the correlation of its z with its "
                "later returns over the period, and how many months it rests on");
  add_html_option(*cmd, o->html);
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    one_on_standard_output({{"--html", &o->html}}, o->json);
    backtest::SignalRequest req;
    req.from = date_value(o->from, "--from");
    req.to = date_value(o->to, "--to");
    req.horizons = horizons_option(o->horizons);
    req.by_name = o->by_name;
    const auto rule = rules::load_rule(o->rule);
    Outputs files;
    open_file(files.html, o->html, "--html");
    auto db = ctx.open_ledger();
    const auto r = backtest::signal(db, rule, req);
    write_file(files.html, [&] { return report::signal_html(r); });
    show(
        files, o->json, [&](const report::Style& style) { return report::signal_text(r, style); },
        [&] { out(report::signal_json(r)); });
  });
}

}  // namespace

void register_backtest_commands(CLI::App& app, Context& ctx) {
  add_backtest(app, ctx);
  add_compare(app, ctx);
  add_signal(app, ctx);
}

}  // namespace keel::cli
