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

struct Stat {
  double mean = 0, sd = 0;
  std::optional<double> clip_low, clip_high;
};

// z-scores from the values of the lines `from` (winsorized first when asked,
// then (x - mean) / sd with the sample sd), written to the lines `to`, whose
// values are clipped to the same bounds. Unset when fewer than two values or
// no spread.
template <typename Value, typename Write>
std::optional<Stat> standardise(std::vector<ScreenLine>& lines,
                                const std::vector<std::size_t>& from,
                                const std::vector<std::size_t>& to, Value value, Write write,
                                std::optional<std::pair<double, double>> winsorize_pct) {
  if (from.size() < 2) return std::nullopt;
  Stat st;
  std::vector<double> v;
  for (const std::size_t i : from) v.push_back(value(lines[i]));
  if (winsorize_pct) {
    std::vector<double> sorted = v;
    std::sort(sorted.begin(), sorted.end());
    st.clip_low = percentile(sorted, winsorize_pct->first);
    st.clip_high = percentile(sorted, winsorize_pct->second);
    for (auto& x : v) x = std::clamp(x, *st.clip_low, *st.clip_high);
  }
  double sum = 0;
  for (const double x : v) sum += x;
  const double n = static_cast<double>(v.size());
  st.mean = sum / n;
  double ss = 0;
  for (const double x : v) ss += (x - st.mean) * (x - st.mean);
  st.sd = std::sqrt(ss / (n - 1));
  if (!(st.sd > 0)) return std::nullopt;
  for (const std::size_t i : to) {
    double& x = value(lines[i]);
    if (st.clip_low) x = std::clamp(x, *st.clip_low, *st.clip_high);
    write(lines[i], (x - st.mean) / st.sd);
  }
  return st;
}

// Scores a screen of several metrics, or within groups: each line's
// metric_z and its composite `value`. Lines that cannot be scored move to
// `rest` with the reason. A metric without spread across the universe
// refuses the screen.
std::optional<Refusal> score_several(const Rule& rule, Date as_of, bool words,
                                     std::vector<ScreenLine>& pass, std::vector<ScreenLine>& rest,
                                     ScreenResult& out) {
  const auto& s = rule.screen;
  const auto metrics = s.metrics();
  const std::string field(to_string(s.within));
  std::vector<std::string> dropped(pass.size());  // the reason, when a line cannot be scored
  std::vector<bool> drop(pass.size(), false);
  // Who is scored against whom: (the lines the statistics come from, the
  // lines given their z's).
  std::vector<std::pair<std::vector<std::size_t>, std::vector<std::size_t>>> sets;
  std::vector<std::size_t> all(pass.size());
  for (std::size_t i = 0; i < all.size(); ++i) all[i] = i;
  if (s.within == Within::universe) {
    sets.emplace_back(all, all);
  } else {
    std::map<std::optional<std::string>, std::vector<std::size_t>> groups;
    for (std::size_t i = 0; i < pass.size(); ++i) groups[pass[i].group].push_back(i);
    std::vector<std::size_t> fallback;
    for (const auto& [g, members] : groups) {
      if (g && members.size() >= static_cast<std::size_t>(s.min_group_size)) {
        sets.emplace_back(members, members);
        continue;
      }
      if (s.small_groups == SmallGroups::whole_universe) {
        fallback.insert(fallback.end(), members.begin(), members.end());
        continue;
      }
      for (const std::size_t i : members) {
        drop[i] = true;
        if (words)
          dropped[i] =
              g ? fmt::format(
                      "{} '{}' has {} name{} passing the screen, fewer than "
                      "screen.min_group_size ({})",
                      field, *g, members.size(), members.size() == 1 ? "" : "s", s.min_group_size)
                : fmt::format("no {} to score it within", field);
      }
    }
    if (!fallback.empty()) {
      std::vector<std::size_t> every;
      for (const std::size_t i : all)
        if (!drop[i]) every.push_back(i);
      sets.emplace_back(every, fallback);
    }
  }
  for (auto& l : pass) l.metric_z.assign(metrics.size(), std::nullopt);
  for (std::size_t m = 0; m < metrics.size(); ++m) {
    const double sign = metrics[m].cheap == Cheap::low ? 1.0 : -1.0;
    for (const auto& [from, to] : sets) {
      auto has = [&](const std::vector<std::size_t>& idx) {
        std::vector<std::size_t> kept;
        for (const std::size_t i : idx)
          if (pass[i].metric_values[m]) kept.push_back(i);
        return kept;
      };
      const auto st = standardise(
          pass, has(from), has(to), [m](ScreenLine& l) -> double& { return *l.metric_values[m]; },
          [m, sign](ScreenLine& l, double z) { l.metric_z[m] = sign * z; }, s.winsorize_pct);
      if (!st && s.within == Within::universe)
        return Refusal{s.metric_list.empty() ? "screen.metric" : "screen.metrics",
                       fmt::format("all {} names passing the screen on {} have the same '{}'; "
                                   "z-scores need some spread",
                                   from.size(), as_of.str(), metrics[m].name)};
      if (st && s.within == Within::universe)
        out.metrics.push_back(ScreenResult::MetricStat{metrics[m].name, st->mean, st->sd,
                                                       st->clip_low, st->clip_high});
    }
  }
  // The composite: the weighted mean of the metric z's a line has.
  for (std::size_t i = 0; i < pass.size(); ++i) {
    if (drop[i]) continue;
    auto& l = pass[i];
    double sum = 0, weights = 0;
    std::string missing;
    for (std::size_t m = 0; m < metrics.size(); ++m) {
      if (l.metric_z[m]) {
        sum += metrics[m].weight * *l.metric_z[m];
        weights += metrics[m].weight;
      } else if (l.metric_values[m] && missing.empty()) {
        missing = metrics[m].name;  // a value, but no spread to score it against
      }
    }
    if (weights > 0 && (s.if_missing == IfMissing::score_available || missing.empty())) {
      l.value = sum / weights;
      continue;
    }
    drop[i] = true;
    if (words)
      dropped[i] = fmt::format("no spread of '{}' among the names of its {} to score it against",
                               missing.empty() ? metrics.front().name : missing, field);
  }
  std::vector<ScreenLine> kept;
  for (std::size_t i = 0; i < pass.size(); ++i) {
    if (!drop[i]) {
      kept.push_back(std::move(pass[i]));
      continue;
    }
    auto& l = pass[i];
    l.passed = false;
    l.metric_z.clear();
    if (words) {
      l.excluded_reason = std::move(dropped[i]);
      l.note = "out: " + l.excluded_reason;
    }
    rest.push_back(std::move(l));
  }
  pass = std::move(kept);
  return std::nullopt;
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
  const auto metrics = s.metrics();
  const bool simple = metrics.size() == 1 && s.within == Within::universe;
  // Whether a figure can be scored; `why` says why not.
  auto usable = [&](const std::optional<Figure>& f, const std::string& metric, int& age,
                    std::string& why) {
    const std::string which = metrics.size() > 1 ? fmt::format("'{}' ", metric) : "";
    if (!f) {
      if (words) why = fmt::format("no '{}' figure known on {}", metric, as_of.str());
      return false;
    }
    age = as_of - f->period;
    if (age > s.max_age_days) {
      if (words)
        why = fmt::format("stale: the {}figure for {} is {} days old (max {})", which,
                          f->period.str(), age, s.max_age_days);
      return false;
    }
    if (s.exclude_non_positive && !f->value.is_positive()) {
      if (words) why = fmt::format("{}not positive ({})", which, f->value.str());
      return false;
    }
    return true;
  };
  for (auto& c : candidates) {
    ScreenLine line;
    line.security_id = c.security_id;
    line.symbol = std::move(c.symbol);
    line.figure = std::move(c.figure);
    line.held = c.held;
    line.track = c.track;
    line.group = std::move(c.group);
    bool out_of_screen = true;
    if (c.ended) {
      if (words)
        line.excluded_reason =
            fmt::format("off the market since {} (merger or delisting)", c.ended->str());
    } else {
      std::size_t ok = 0;
      std::string first_why, whys;
      if (!simple) line.metric_values.resize(metrics.size());
      for (std::size_t m = 0; m < metrics.size(); ++m) {
        const auto& f = m == 0 ? line.figure : c.more.at(m - 1);
        int age = 0;
        std::string why;
        if (usable(f, metrics[m].name, age, why)) {
          ++ok;
          if (!simple) line.metric_values[m] = f->value.to_double();
        } else if (words) {
          if (first_why.empty()) first_why = why;
          whys += (whys.empty() ? "" : "; ") + why;
        }
        if (m == 0 && f) line.age_days = age;
      }
      const bool enough = s.if_missing == IfMissing::fail ? ok == metrics.size() : ok > 0;
      if (!enough) {
        if (words) line.excluded_reason = s.if_missing == IfMissing::fail ? first_why : whys;
      } else if (!c.has_price) {
        if (words)
          line.excluded_reason = c.unpriced_why.empty()
                                     ? fmt::format("no close on or before {}", as_of.str())
                                     : c.unpriced_why;
      } else {
        out_of_screen = false;
      }
    }
    if (!out_of_screen) {
      line.passed = true;
      if (simple) line.value = line.figure->value.to_double();
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

  if (!simple) {
    for (const auto& m : metrics) out.scored_metrics.push_back(m.name);
    if (s.within != Within::universe) out.within = std::string(to_string(s.within));
    if (auto refusal = score_several(rule, as_of, words, pass, rest, out)) {
      out.passed = pass.size();
      return refuse(refusal->key, refusal->why);
    }
    out.passed = pass.size();
    if (pass.size() < static_cast<std::size_t>(s.min_names))
      return refuse(
          "screen.min_names",
          fmt::format("only {} name{} pass{} the screen on {}; the rule needs at least {}",
                      pass.size(), pass.size() == 1 ? "" : "s", pass.size() == 1 ? "es" : "",
                      as_of.str(), s.min_names));
  } else if (s.winsorize_pct) {
    std::vector<double> sorted;
    for (const auto& l : pass) sorted.push_back(*l.value);
    std::sort(sorted.begin(), sorted.end());
    out.clip_low = percentile(sorted, s.winsorize_pct->first);
    out.clip_high = percentile(sorted, s.winsorize_pct->second);
    for (auto& l : pass) l.value = std::clamp(*l.value, *out.clip_low, *out.clip_high);
  }

  if (!simple) {
    // The composite: standardised again across the passing names.
    std::vector<std::size_t> all(pass.size());
    for (std::size_t i = 0; i < all.size(); ++i) all[i] = i;
    const auto st = standardise(
        pass, all, all, [](ScreenLine& l) -> double& { return *l.value; },
        [](ScreenLine& l, double z) { l.z = z; }, std::nullopt);
    if (!st)
      return refuse(s.metric_list.empty() ? "screen.metric" : "screen.metrics",
                    fmt::format("all {} names passing the screen on {} have the same score; "
                                "z-scores need some spread",
                                pass.size(), as_of.str()));
    out.mean = st->mean;
    out.sd = st->sd;
  } else {
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
  }
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
  out.reserve(rule.weights.sleeves.size() + screened.lines.size());
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
