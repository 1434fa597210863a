#include "report/sweep_forms.h"

#include <fmt/format.h>

#include <cmath>

#include "core/json.h"
#include "core/text.h"
#include "report/backtest_forms.h"
#include "report/format.h"
#include "report/json_schema.h"

namespace keel::report {
namespace {

const double kRootTwelve = std::sqrt(12.0);

std::optional<double> annualized(const std::optional<double>& monthly_sharpe) {
  if (!monthly_sharpe) return std::nullopt;
  return *monthly_sharpe * kRootTwelve;
}

std::string ratio(const std::optional<double>& x) {
  return x ? fmt::format("{:.2f}", std::fabs(*x) < 0.005 ? 0.0 : *x) : std::string("n/a");
}

std::string settings_text(const backtest::SweepResult& r, std::size_t i) {
  std::string s;
  for (std::size_t k = 0; k < r.keys.size(); ++k)
    s += fmt::format("{}{}={}", k ? ", " : "", r.keys[k], printable(r.variants[i].values[k]));
  return s;
}

void variant_settings_json(JsonWriter& j, const backtest::SweepResult& r, std::size_t i) {
  j.key("settings").begin_array();
  for (std::size_t k = 0; k < r.keys.size(); ++k)
    j.begin_object().member("key", r.keys[k]).member("value", r.variants[i].values[k]).end_object();
  j.end_array();
}

void numbers_json(JsonWriter& j, std::string_view name, const std::vector<double>& xs) {
  j.key(name).begin_array();
  for (const double x : xs) j.value(x);
  j.end_array();
}

std::string walk_forward_text(const backtest::SweepResult& r, const Style& style) {
  const auto& w = *r.walk_forward;
  std::string s = fmt::format(
      "\nWalk-forward: {} months in sample, then {} out of sample; on each in-sample window the "
      "variant with the highest Sharpe ratio of its monthly returns is chosen and run alone on "
      "the next window, starting in cash with the value the last window ended with.\n\n",
      w.in_months, w.out_months);
  Table t({{"in sample", Align::left},
           {"out of sample", Align::left},
           {"chosen", Align::right},
           {"Sharpe in sample (ann.)", Align::right},
           {"return out of sample", Align::right},
           {"settings", Align::left, true, 1}});
  for (const auto& win : w.windows)
    t.add_row({win.in_from.str() + ".." + win.in_to.str(),
               win.out_from.str() + ".." + win.out_to.str(), fmt::format("#{}", win.chosen + 1),
               ratio(annualized(win.in_sharpe)), pct(win.out_return),
               settings_text(r, win.chosen)});
  s += t.render(style);
  s += fmt::format("\nOut of sample, {} to {}:\n", w.out_from.str(), w.out_to.str());
  Table u({{"", Align::left}, {"return", Align::right}, {"Sharpe (ann.)", Align::right}});
  u.add_row({"walk-forward, stitched", pct(w.twr), ratio(annualized(w.sharpe))});
  if (r.best)
    u.add_row({fmt::format("best variant #{}, chosen on the whole period", *r.best + 1),
               pct(*w.best_twr), ratio(annualized(w.best_sharpe))});
  s += u.render(style);
  return s;
}

}  // namespace

std::string sweep_text(const backtest::SweepResult& r, const Style& style) {
  return sweep_figures_text(r, style) + closing_notes(r.notes, r.cautions);
}

std::string sweep_figures_text(const backtest::SweepResult& r, const Style& style) {
  std::string s =
      fmt::format("Sweep of rule '{}' from {} to {} ({}), start value {}\n", printable(r.rule_name),
                  r.from.str(), r.to.str(),
                  r.frictionless ? "frictionless" : "the rule's fees, bands and lot sizes",
                  r.start_value.fixed(2));
  s += fmt::format("{} variant{} tried, each over the same {} month{} of history.\n\n",
                   r.variants.size(), r.variants.size() == 1 ? "" : "s", r.months.size(),
                   r.months.size() == 1 ? "" : "s");
  std::vector<Table::Column> cols{{"#", Align::right}};
  for (const auto& k : r.keys) cols.push_back({k, Align::right});
  cols.insert(cols.end(), {{"return", Align::right},
                           {"annualized", Align::right},
                           {"Sharpe (ann.)", Align::right},
                           {"volatility", Align::right, false, 2},
                           {"max drawdown", Align::right, false, 3},
                           {"turnover/yr", Align::right, false, 4},
                           {"cash days", Align::right, false, 5}});
  Table t(cols);
  for (std::size_t i = 0; i < r.variants.size(); ++i) {
    const auto& v = r.variants[i];
    std::vector<std::string> cells{fmt::format("{}{}", i + 1, r.best == i ? "*" : " ")};
    for (const auto& value : v.values) cells.push_back(printable(value));
    cells.insert(cells.end(),
                 {pct(v.twr), pct(v.twr_annualized), ratio(annualized(v.sharpe)), pct(v.volatility),
                  pct(v.max_drawdown), fmt::format("{:.1f}%", v.turnover_per_year * 100),
                  std::to_string(v.cash_days)});
    t.add_row(std::move(cells));
  }
  s += t.render(style);
  s += "Sharpe (ann.): mean over standard deviation of monthly returns, x sqrt(12); * the best.\n";

  s += "\nHow much of the best is luck:\n";
  if (r.best) {
    s += fmt::format("  best variant: #{} ({}), Sharpe ratio {} a month ({} annualized)\n",
                     *r.best + 1, settings_text(r, *r.best), ratio(r.variants[*r.best].sharpe),
                     ratio(annualized(r.variants[*r.best].sharpe)));
  }
  if (r.deflated) {
    const auto& d = *r.deflated;
    s += fmt::format(
        "  expected best of {} variant{} with no skill: {} a month (from the spread of their "
        "Sharpe ratios)\n",
        d.trials, d.trials == 1 ? "" : "s", ratio(d.expected_max));
    s += fmt::format(
        "  deflated Sharpe ratio: {:.2f}, the probability that the best variant's true Sharpe "
        "ratio is above that (skew {:.2f}, kurtosis {:.2f}, {} months)\n",
        d.probability, d.skew, d.kurtosis, d.observations);
  }
  if (r.pbo) {
    const auto& p = *r.pbo;
    s += fmt::format(
        "  probability of backtest overfitting (PBO): {:.2f}; in {} of {} splits of {} months "
        "into {} blocks, the variant best in one half did no better than the median variant in "
        "the other\n",
        p.probability, static_cast<long>(std::lround(p.probability * p.combinations)),
        p.combinations, p.rows_used, p.blocks);
  }
  if (r.walk_forward) s += walk_forward_text(r, style);
  return s;
}

std::string sweep_json(const backtest::SweepResult& r) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "sweep", 1);
  j.member("rule", r.rule_name).member("from", r.from.str()).member("to", r.to.str());
  j.member("start_value", r.start_value).member("frictionless", r.frictionless);
  j.member("keys", r.keys).member("months", r.months);
  j.member("criterion", "sharpe ratio of monthly returns");
  j.member("variants_tried", static_cast<unsigned long long>(r.variants.size()));
  j.key("variants").begin_array();
  for (std::size_t i = 0; i < r.variants.size(); ++i) {
    const auto& v = r.variants[i];
    j.begin_object().member("number", static_cast<unsigned long long>(i + 1));
    variant_settings_json(j, r, i);
    j.member("sharpe_monthly", v.sharpe).member("sharpe_annualized", annualized(v.sharpe));
    j.member("twr", v.twr).member("twr_annualized", v.twr_annualized);
    j.member("volatility_annualized", v.volatility).member("max_drawdown", v.max_drawdown);
    j.member("turnover_per_year", v.turnover_per_year);
    j.member("end_value", v.end_value.rounded(10)).member("cash_days", v.cash_days);
    numbers_json(j, "monthly_returns", v.monthly);
    j.end_object();
  }
  j.end_array();
  j.key("best");
  if (r.best)
    j.value(static_cast<unsigned long long>(*r.best + 1));
  else
    j.null();
  j.key("deflated_sharpe");
  if (r.deflated) {
    const auto& d = *r.deflated;
    j.begin_object().member("sharpe_monthly", d.sharpe).member("observations", d.observations);
    j.member("skew", d.skew).member("kurtosis", d.kurtosis).member("trials", d.trials);
    j.member("trials_variance", d.trials_variance).member("expected_max_sharpe", d.expected_max);
    j.member("probability", d.probability).end_object();
  } else {
    j.null();
  }
  j.key("pbo");
  if (r.pbo) {
    const auto& p = *r.pbo;
    j.begin_object().member("probability", p.probability).member("blocks", p.blocks);
    j.member("months_used", p.rows_used).member("combinations", p.combinations);
    numbers_json(j, "logits", p.logits);
    j.end_object();
  } else {
    j.null();
  }
  j.key("walk_forward");
  if (r.walk_forward) {
    const auto& w = *r.walk_forward;
    j.begin_object().member("in_months", w.in_months).member("out_months", w.out_months);
    j.key("windows").begin_array();
    for (const auto& win : w.windows) {
      j.begin_object();
      j.member("in_from", win.in_from.str()).member("in_to", win.in_to.str());
      j.member("out_from", win.out_from.str()).member("out_to", win.out_to.str());
      j.member("variant", static_cast<unsigned long long>(win.chosen + 1));
      j.member("in_sharpe_monthly", win.in_sharpe);
      j.member("out_start_value", win.out_start.rounded(10));
      j.member("out_end_value", win.out_end.rounded(10)).member("out_return", win.out_return);
      j.end_object();
    }
    j.end_array();
    j.member("out_from", w.out_from.str()).member("out_to", w.out_to.str());
    numbers_json(j, "monthly_returns", w.monthly);
    j.member("twr", w.twr).member("sharpe_monthly", w.sharpe);
    j.member("best_variant_twr", w.best_twr).member("best_variant_sharpe_monthly", w.best_sharpe);
    j.end_object();
  } else {
    j.null();
  }
  j.member("notes", r.notes).member("cautions", r.cautions);
  j.end_object();
  return s + "\n";
}

}  // namespace keel::report
