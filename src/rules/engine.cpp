#include "rules/engine.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <stdexcept>

#include "core/error.h"

namespace keel::rules {
namespace {

std::string z_text(double z) {
  // Two places for people; "-0.00" reads as a bug, so print it as 0.00.
  const double shown = std::fabs(z) < 0.005 ? 0.0 : z;
  return fmt::format("{:.2f}", shown);
}

std::string pct(const Decimal& fraction) {
  return (fraction * Decimal(100)).fixed(2) + "%";
}

// Linear interpolation between order statistics: numpy.percentile's and
// pandas.Series.quantile's default (Hyndman and Fan, 1996, definition 7).
double percentile(const std::vector<double>& sorted, double pct_value) {
  const double h = (static_cast<double>(sorted.size()) - 1) * pct_value / 100.0;
  const auto lo = static_cast<std::size_t>(std::floor(h));
  if (lo + 1 >= sorted.size()) return sorted.back();
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[lo + 1] - sorted[lo]);
}

// Sorts lines by moving each once: the comparisons work on indices (a line
// is large, and a screen of a thousand names is sorted on every day of a
// back-test).
template <typename Less>
void sort_lines(std::vector<ScreenLine>& lines, Less less) {
  if (std::is_sorted(lines.begin(), lines.end(), less)) return;
  std::vector<std::size_t> order(lines.size());
  for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return less(lines[a], lines[b]); });
  std::vector<ScreenLine> sorted;
  sorted.reserve(lines.size());
  for (const std::size_t i : order) sorted.push_back(std::move(lines[i]));
  lines = std::move(sorted);
}

bool by_symbol(const ScreenLine& a, const ScreenLine& b) {
  return a.symbol < b.symbol;
}

}  // namespace

// ----------------------------------------------------------------- screen

std::string Refusal::text(const Rule& rule) const {
  return fmt::format("{}: {}", rule.where(key), why);
}

ScreenResult screen(const Rule& rule, Date as_of, std::vector<Candidate> candidates,
                    Explain explain) {
  ScreenResult out;
  out.as_of = as_of;
  out.explained = explain == Explain::all;
  const bool words = out.explained;
  const auto& s = rule.screen;
  std::vector<ScreenLine> pass, rest;
  pass.reserve(candidates.size());
  for (auto& c : candidates) {
    ScreenLine line;
    line.security_id = c.security_id;
    line.symbol = std::move(c.symbol);
    line.figure = std::move(c.figure);
    line.held = c.held;
    line.track = c.track;
    const auto& f = line.figure;
    bool out_of_screen = true;
    if (c.ended) {
      if (words)
        line.excluded_reason =
            fmt::format("off the market since {} (merger or delisting)", c.ended->str());
    } else if (!f) {
      if (words)
        line.excluded_reason = fmt::format("no '{}' figure known on {}", s.metric, as_of.str());
    } else {
      line.age_days = as_of - f->period;
      if (line.age_days > s.max_age_days) {
        if (words)
          line.excluded_reason = fmt::format("stale: the figure for {} is {} days old (max {})",
                                             f->period.str(), line.age_days, s.max_age_days);
      } else if (s.exclude_non_positive && !f->value.is_positive()) {
        if (words) line.excluded_reason = fmt::format("not positive ({})", f->value.str());
      } else if (!c.has_price) {
        if (words) line.excluded_reason = fmt::format("no close on or before {}", as_of.str());
      } else {
        out_of_screen = false;
      }
    }
    if (!out_of_screen) {
      line.passed = true;
      line.value = f->value.to_double();
      pass.push_back(std::move(line));
    } else {
      if (words) line.note = "out: " + line.excluded_reason;
      rest.push_back(std::move(line));
    }
  }
  out.passed = pass.size();
  // A refused screen keeps its lines (nothing selected), so it can be shown.
  auto refuse = [&](std::string key, std::string why) {
    out.refusal = Refusal{std::move(key), std::move(why)};
    out.selected = 0;
    for (auto& l : pass) l.selected = false;
    sort_lines(pass, [](const ScreenLine& a, const ScreenLine& b) {
      return a.z && b.z && *a.z != *b.z ? *a.z < *b.z : a.symbol < b.symbol;
    });
    sort_lines(rest, by_symbol);
    out.lines = std::move(pass);
    for (auto& l : rest) out.lines.push_back(std::move(l));
    return out;
  };
  if (pass.size() < static_cast<std::size_t>(s.min_names))
    return refuse("screen.min_names",
                  fmt::format("only {} name{} pass{} the screen on {}; the rule needs at least {}",
                              pass.size(), pass.size() == 1 ? "" : "s",
                              pass.size() == 1 ? "es" : "", as_of.str(), s.min_names));

  if (s.winsorize_pct) {
    std::vector<double> sorted;
    for (const auto& l : pass) sorted.push_back(*l.value);
    std::sort(sorted.begin(), sorted.end());
    out.clip_low = percentile(sorted, s.winsorize_pct->first);
    out.clip_high = percentile(sorted, s.winsorize_pct->second);
    for (auto& l : pass) l.value = std::clamp(*l.value, *out.clip_low, *out.clip_high);
  }

  // Two passes (mean, then squared deviations): the textbook sample variance.
  double sum = 0;
  for (const auto& l : pass) sum += *l.value;
  const double n = static_cast<double>(pass.size());
  out.mean = sum / n;
  double ss = 0;
  for (const auto& l : pass) ss += (*l.value - out.mean) * (*l.value - out.mean);
  out.sd = std::sqrt(ss / (n - 1));
  if (!(out.sd > 0))
    return refuse("screen.metric",
                  fmt::format("all {} names passing the screen on {} have the same value; "
                              "z-scores need some spread",
                              pass.size(), as_of.str()));
  const double sign = s.cheap == Cheap::low ? 1.0 : -1.0;
  for (auto& l : pass) l.z = sign * (*l.value - out.mean) / out.sd;
  sort_lines(pass, [](const ScreenLine& a, const ScreenLine& b) {
    return *a.z != *b.z ? *a.z < *b.z : a.symbol < b.symbol;
  });

  // Selection, then the hysteresis band for names already held.
  const auto& sel = rule.selection;
  std::size_t keep = 0;
  if (sel.by == SelectBy::count) keep = static_cast<std::size_t>(sel.count);
  if (sel.by == SelectBy::top_pct) {
    // ceil(top_pct % of n), exact, at least one name.
    const Decimal want = sel.top_pct * Decimal(static_cast<long long>(pass.size()));
    const Decimal q = Decimal::divide(want, Decimal(100), 0);
    keep = static_cast<std::size_t>(std::stoll(q.str()));
    if (Decimal(static_cast<long long>(keep)) * Decimal(100) < want) ++keep;
    keep = std::max<std::size_t>(keep, 1);
  }
  const auto& tr = rule.track_record;
  std::size_t rank = 0;       // among the names the track record lets through
  std::size_t held_back = 0;  // names that would enter but for their track record
  for (std::size_t i = 0; i < pass.size(); ++i) {
    auto& l = pass[i];
    const double z = *l.z;
    std::string track_why;
    if (tr) {
      const auto& t = l.track;
      l.track_ok = t && t->observations >= tr->min_observations && t->correlation &&
                   *t->correlation <= tr->max_correlation;
      if (words && !l.track_ok)
        track_why =
            !t ? "no track record"
            : t->observations < tr->min_observations
                ? fmt::format("track record of {} observation{}, fewer than {}", t->observations,
                              t->observations == 1 ? "" : "s", tr->min_observations)
            : !t->correlation
                ? fmt::format("track record of {} observations has no spread", t->observations)
                : fmt::format("track record {} > {} over {} observations", z_text(*t->correlation),
                              z_text(tr->max_correlation), t->observations);
    }
    const bool would = sel.by == SelectBy::z ? z <= sel.z_max : rank < keep;
    const bool entered = would && l.track_ok;
    if (l.track_ok) ++rank;
    if (would && !l.track_ok) ++held_back;
    auto test = [&] {
      return sel.by == SelectBy::z
                 ? fmt::format("z = {} {} {}", z_text(z), would ? "<=" : ">", z_text(sel.z_max))
                 : fmt::format("z = {}, rank {} {} {}", z_text(z), l.track_ok ? rank : rank + 1,
                               would ? "<=" : ">", keep);
    };
    if (!l.track_ok) {
      if (words) l.note = test() + ", but its " + track_why;
    } else if (entered) {
      l.selected = true;
      if (words) l.note = test();
    } else if (l.held && sel.exit_z && z <= *sel.exit_z) {
      l.selected = true;
      if (words) l.note = fmt::format("held; z = {} <= exit {}", z_text(z), z_text(*sel.exit_z));
    } else if (words && l.held && sel.exit_z) {
      l.note = fmt::format("held; z = {} > exit {}", z_text(z), z_text(*sel.exit_z));
    } else if (words) {
      l.note = test();
    }
    if (l.selected) ++out.selected;
  }
  if (out.selected == 0 && held_back > 0) {
    const auto failed = static_cast<std::size_t>(
        std::count_if(pass.begin(), pass.end(), [](const ScreenLine& l) { return !l.track_ok; }));
    return refuse("track_record.max_correlation",
                  failed == pass.size()
                      ? fmt::format("selects no name on {}: all {} names passing the screen fail "
                                    "the track record (fewer than {} observations, or a "
                                    "correlation above {})",
                                    as_of.str(), pass.size(), tr->min_observations,
                                    z_text(tr->max_correlation))
                      : fmt::format("selects no name on {}: the track record keeps out all {} "
                                    "name{} the screen would select",
                                    as_of.str(), held_back, held_back == 1 ? "" : "s"));
  }
  if (out.selected == 0)
    return refuse("select.z_max",
                  fmt::format("selects no name on {}: the lowest z among the {} names passing "
                              "the screen is {}",
                              as_of.str(), pass.size(), z_text(*pass.front().z)));

  sort_lines(rest, by_symbol);
  out.lines = std::move(pass);
  for (auto& l : rest) out.lines.push_back(std::move(l));
  return out;
}

// ---------------------------------------------------------------- targets

Targets targets(const Rule& rule, const ScreenResult& screened,
                const std::vector<std::int64_t>& sleeve_ids) {
  Targets result;
  if (screened.refusal) {
    result.refusal = screened.refusal;
    return result;
  }
  std::vector<Target>& out = result.list;
  const auto& w = rule.weights;
  for (std::size_t i = 0; i < w.sleeves.size(); ++i)
    out.push_back(Target{sleeve_ids.at(i), w.sleeves[i].symbol, w.sleeves[i].weight, true,
                         std::nullopt, false,
                         fmt::format("sleeve at {}", pct(w.sleeves[i].weight))});

  std::vector<const ScreenLine*> chosen;
  for (const auto& l : screened.lines)
    if (l.selected) chosen.push_back(&l);
  const Decimal share = Decimal(1) - w.sleeve_total();
  const Decimal n(static_cast<long long>(chosen.size()));
  if (n * w.max_weight < share) {
    result.refusal = Refusal{
        "weights.max_weight_pct",
        fmt::format("weights cannot sum to one on {}: {} selected names x {} = {} is less than "
                    "the {} they must fill",
                    screened.as_of.str(), chosen.size(), pct(w.max_weight), pct(n * w.max_weight),
                    pct(share))};
    out.clear();
    return result;
  }

  // Raw weights: equal, or exp(-tilt * z) (a double statistic, brought into
  // Decimal at 12 significant digits; only ratios matter).
  std::vector<Decimal> raw;
  for (const auto* l : chosen)
    raw.push_back(w.scheme == Scheme::equal
                      ? Decimal(1)
                      : Decimal::parse(fmt::format("{:.12e}", std::exp(-w.tilt * *l->z))));
  // Cap and share the excess among the uncapped names in proportion
  // ("water filling"); at most one pass per name.
  std::vector<Decimal> weight(chosen.size());
  std::vector<bool> capped(chosen.size(), false);
  Decimal left = share;
  for (std::size_t round = 0; round <= chosen.size(); ++round) {
    Decimal raw_sum;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i]) raw_sum += raw[i];
    if (raw_sum.is_zero()) break;
    // Equal raw weights give one quotient for all: divide once.
    std::optional<Decimal> same;
    for (std::size_t i = 0; i < chosen.size(); ++i) {
      if (capped[i]) continue;
      if (w.scheme == Scheme::equal) {
        if (!same) same = Decimal::divide(left * raw[i], raw_sum, 12);
        weight[i] = *same;
      } else {
        weight[i] = Decimal::divide(left * raw[i], raw_sum, 12);
      }
    }
    bool any = false;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i] && weight[i] > w.max_weight) {
        capped[i] = true;
        weight[i] = w.max_weight;
        left -= w.max_weight;
        any = true;
      }
    if (!any) break;
  }
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    std::string why = chosen[i]->note;
    if (capped[i] && screened.explained) why += fmt::format(" (capped at {})", pct(w.max_weight));
    out.push_back(Target{chosen[i]->security_id, chosen[i]->symbol, weight[i], false, chosen[i]->z,
                         chosen[i]->held, why});
  }
  for (const auto& l : screened.lines)
    if (l.held && !l.selected)
      out.push_back(Target{l.security_id, l.symbol, Decimal(), false, l.z, true,
                           !screened.explained ? std::string()
                           : l.passed          ? l.note
                                               : "excluded: " + l.excluded_reason});
  return result;
}

}  // namespace keel::rules
