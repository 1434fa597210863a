#include "rules/engine.h"

#include <fmt/format.h>

#include <algorithm>
#include <bit>
#include <cmath>
#include <cstdint>
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

// "a; b; c"
std::string joined(const std::vector<std::string>& parts) {
  std::string out;
  for (const auto& p : parts) out += (out.empty() ? "" : "; ") + p;
  return out;
}

struct Stat {
  double mean = 0, sd = 0;
  std::optional<double> clip_low, clip_high;
};

// A candidate's state while the screen scores it. Its line is built once, in
// the result's order, when the scoring is done: a line is large, and a screen
// of a thousand names runs on every month of a back-test.
struct Scoring {
  Scoring() {}  // NOLINT(modernize-use-equals-default): not zeroed first (see Candidate)
  int age_days = 0;
  bool passed = false;
  std::optional<double> value, z;
  std::vector<std::optional<double>> metric_values, metric_z;
  std::string excluded_reason;
};

// z-scores from the values at `from` (winsorized first when asked, then
// (x - mean) / sd with the sample sd), written to the indices `to`, whose
// values are clipped to the same bounds. value(i) is the value at index i,
// write(i, z) its z. Unset when fewer than two values or no spread.
template <typename Value, typename Write>
std::optional<Stat> standardise(const std::vector<std::size_t>& from,
                                const std::vector<std::size_t>& to, Value value, Write write,
                                std::optional<std::pair<double, double>> winsorize_pct) {
  if (from.size() < 2) return std::nullopt;
  Stat st;
  std::vector<double> v;
  v.reserve(from.size());
  for (const std::size_t i : from) v.push_back(value(i));
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
    double& x = value(i);
    if (st.clip_low) x = std::clamp(x, *st.clip_low, *st.clip_high);
    write(i, (x - st.mean) / st.sd);
  }
  return st;
}

// Who is scored against whom in a screen of several metrics, or within
// groups: (the names the statistics come from, the names given their z's),
// as indices of `work`. Names of a group too small to score are marked in
// `drop`, with the reason when `words`.
std::vector<std::pair<std::vector<std::size_t>, std::vector<std::size_t>>> scoring_sets(
    const ScreenRule& s, bool words, const std::vector<Candidate>& candidates,
    std::vector<Scoring>& work, const std::vector<std::size_t>& pass, std::vector<bool>& drop) {
  std::vector<std::pair<std::vector<std::size_t>, std::vector<std::size_t>>> sets;
  if (s.within == Within::universe) {
    sets.emplace_back(pass, pass);
    return sets;
  }
  const std::string field(to_string(s.within));
  std::map<std::optional<std::string>, std::vector<std::size_t>> groups;
  for (const std::size_t i : pass) groups[candidates[i].group].push_back(i);
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
        work[i].excluded_reason =
            g ? fmt::format(
                    "{} '{}' has {} name{} passing the screen, fewer than "
                    "screen.min_group_size ({})",
                    field, *g, members.size(), members.size() == 1 ? "" : "s", s.min_group_size)
              : fmt::format("no {} to score it within", field);
    }
  }
  if (!fallback.empty()) {
    std::vector<std::size_t> every;
    for (const std::size_t i : pass)
      if (!drop[i]) every.push_back(i);
    sets.emplace_back(every, fallback);
  }
  return sets;
}

// Scores a screen of several metrics, or within groups: each passing name's
// metric_z and its composite `value`. Names that cannot be scored move from
// `pass` to `rest` with the reason. A metric without spread across the
// universe refuses the screen.
std::optional<Refusal> score_several(const Rule& rule, Date as_of, bool words,
                                     const std::vector<Candidate>& candidates,
                                     std::vector<Scoring>& work, std::vector<std::size_t>& pass,
                                     std::vector<std::size_t>& rest, ScreenResult& out) {
  const auto& s = rule.screen;
  const auto metrics = s.metrics();
  const std::string field(to_string(s.within));
  std::vector<bool> drop(work.size(), false);
  const auto sets = scoring_sets(s, words, candidates, work, pass, drop);
  for (const std::size_t i : pass) work[i].metric_z.assign(metrics.size(), std::nullopt);
  for (std::size_t m = 0; m < metrics.size(); ++m) {
    const double sign = metrics[m].cheap == Cheap::low ? 1.0 : -1.0;
    for (const auto& [from, to] : sets) {
      auto has = [&](const std::vector<std::size_t>& idx) {
        std::vector<std::size_t> kept;
        for (const std::size_t i : idx)
          if (work[i].metric_values[m]) kept.push_back(i);
        return kept;
      };
      const auto st = standardise(
          has(from), has(to), [&](std::size_t i) -> double& { return *work[i].metric_values[m]; },
          [&](std::size_t i, double z) { work[i].metric_z[m] = sign * z; }, s.winsorize_pct);
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
  // The composite: the weighted mean of the metric z's a name has.
  for (const std::size_t i : pass) {
    if (drop[i]) continue;
    auto& w = work[i];
    double sum = 0, weights = 0;
    std::string missing;
    for (std::size_t m = 0; m < metrics.size(); ++m) {
      if (w.metric_z[m]) {
        sum += metrics[m].weight * *w.metric_z[m];
        weights += metrics[m].weight;
      } else if (w.metric_values[m] && missing.empty()) {
        missing = metrics[m].name;  // a value, but no spread to score it against
      }
    }
    if (weights > 0 && (s.if_missing == IfMissing::score_available || missing.empty())) {
      w.value = sum / weights;
      continue;
    }
    drop[i] = true;
    if (words)
      w.excluded_reason =
          fmt::format("no spread of '{}' among the names of its {} to score it against",
                      missing.empty() ? metrics.front().name : missing, field);
  }
  std::vector<std::size_t> kept;
  for (const std::size_t i : pass) {
    if (!drop[i]) {
      kept.push_back(i);
      continue;
    }
    work[i].passed = false;
    work[i].metric_z.clear();
    rest.push_back(i);
  }
  pass = std::move(kept);
  return std::nullopt;
}

// Whether a figure can be scored on `as_of`: known, recent enough and (when
// the rule asks) positive; `age` is set whenever there is a figure. With
// `whys`, the reason it cannot is appended there.
bool usable(const ScreenRule& s, Date as_of, bool several, const std::optional<Figure>& f,
            const std::string& metric, int& age, std::vector<std::string>* whys) {
  auto which = [&] { return several ? fmt::format("'{}' ", metric) : std::string(); };
  if (!f) {
    if (whys) whys->push_back(fmt::format("no '{}' figure known on {}", metric, as_of.str()));
    return false;
  }
  age = as_of - f->period;
  if (age > s.max_age_days) {
    if (whys)
      whys->push_back(fmt::format("stale: the {}figure for {} is {} days old (max {})", which(),
                                  f->period.str(), age, s.max_age_days));
    return false;
  }
  if (s.exclude_non_positive && !f->value.is_positive()) {
    if (whys) whys->push_back(fmt::format("{}not positive ({})", which(), f->value.str()));
    return false;
  }
  return true;
}

// Checks one candidate: true when it passes the screen. Fills its `work`:
// the age of its first figure, its metrics' values (a screen of several
// metrics or within groups) and, when `words`, why it does not pass.
bool check(const Rule& rule, const std::vector<MetricSpec>& metrics, bool simple, Date as_of,
           bool words, const Candidate& c, Scoring& work) {
  const auto& s = rule.screen;
  if (c.ended) {
    if (words)
      work.excluded_reason =
          fmt::format("off the market since {} (merger or delisting)", c.ended->str());
    return false;
  }
  std::size_t ok = 0;
  std::vector<std::string> whys;  // of the metrics that cannot be scored, when `words`
  if (!simple) work.metric_values.resize(metrics.size());
  for (std::size_t m = 0; m < metrics.size(); ++m) {
    const auto& f = m == 0 ? c.figure : c.more.at(m - 1);
    int age = 0;
    if (usable(s, as_of, metrics.size() > 1, f, metrics[m].name, age, words ? &whys : nullptr)) {
      ++ok;
      if (!simple) work.metric_values[m] = f->value.to_double();
    }
    if (m == 0 && f) work.age_days = age;
  }
  const bool enough = s.if_missing == IfMissing::fail ? ok == metrics.size() : ok > 0;
  if (!enough) {
    if (words) work.excluded_reason = s.if_missing == IfMissing::fail ? whys.front() : joined(whys);
    return false;
  }
  if (!c.has_price) {
    if (words)
      work.excluded_reason = c.unpriced_why.empty()
                                 ? fmt::format("no close on or before {}", as_of.str())
                                 : c.unpriced_why;
    return false;
  }
  return true;
}

// Sorts indices by `less`, leaving them alone when already in order.
template <typename T, typename Less>
void sort_unless_sorted(std::vector<T>& v, Less less) {
  if (!std::is_sorted(v.begin(), v.end(), less)) std::sort(v.begin(), v.end(), less);
}

// A key whose unsigned order is the order of the doubles it is made from
// (finite ones; -0 and +0 give one key).
std::uint64_t order_key(double x) {
  const auto bits = std::bit_cast<std::uint64_t>(x + 0.0);
  return bits >> 63 ? ~bits : bits | (std::uint64_t{1} << 63);
}

// The passing names by z, then by symbol (every z set; symbols unique, so
// the order is one): sorted as 128-bit keys (z, index), then each run of
// equal z by symbol.
void sort_by_z(std::vector<std::size_t>& pass, const std::vector<Scoring>& work,
               const std::vector<Candidate>& candidates) {
  __extension__ typedef unsigned __int128 Key;  // GCC and Clang; -Wpedantic wants the marker
  std::vector<Key> keys;
  keys.reserve(pass.size());
  for (const std::size_t i : pass) keys.push_back(Key{order_key(*work[i].z)} << 64 | i);
  std::sort(keys.begin(), keys.end());
  for (std::size_t k = 0; k < keys.size(); ++k) pass[k] = static_cast<std::size_t>(keys[k]);
  auto z_of = [&](std::size_t k) { return static_cast<std::uint64_t>(keys[k] >> 64); };
  for (std::size_t from = 0, to = 1; from < keys.size(); from = to++) {
    while (to < keys.size() && z_of(to) == z_of(from)) ++to;
    if (to - from > 1)
      std::sort(pass.begin() + static_cast<std::ptrdiff_t>(from),
                pass.begin() + static_cast<std::ptrdiff_t>(to), [&](std::size_t a, std::size_t b) {
                  return candidates[a].symbol < candidates[b].symbol;
                });
  }
}

// The result's lines, each built once from its candidate and its scoring:
// the names at `pass`, then those at `rest`, in that order.
void build_lines(ScreenResult& out, bool words, std::vector<Candidate>& candidates,
                 std::vector<Scoring>& work, const std::vector<std::size_t>& pass,
                 const std::vector<std::size_t>& rest) {
  out.lines.reserve(pass.size() + rest.size());
  auto build = [&](std::size_t i) {
    Candidate& c = candidates[i];
    Scoring& w = work[i];
    ScreenLine& line = out.lines.emplace_back();
    line.security_id = c.security_id;
    line.symbol = std::move(c.symbol);
    line.figure = std::move(c.figure);
    line.age_days = w.age_days;
    line.value = w.value;
    line.z = w.z;
    line.held = c.held;
    line.passed = w.passed;
    if (c.track) line.track = c.track;
    if (!w.metric_values.empty()) line.metric_values = std::move(w.metric_values);
    if (!w.metric_z.empty()) line.metric_z = std::move(w.metric_z);
    if (c.group) line.group = std::move(c.group);
    if (!words) return;  // no reasons to move
    if (!w.passed) line.note = "out: " + w.excluded_reason;
    line.excluded_reason = std::move(w.excluded_reason);
  };
  for (const std::size_t i : pass) build(i);
  for (const std::size_t i : rest) build(i);
}

// Why a track record keeps a name from being selected.
std::string track_why(const std::optional<TrackStat>& t, const TrackRecordRule& tr) {
  if (!t) return "no track record";
  if (t->observations < tr.min_observations)
    return fmt::format("track record of {} observation{}, fewer than {}", t->observations,
                       t->observations == 1 ? "" : "s", tr.min_observations);
  if (!t->correlation)
    return fmt::format("track record of {} observations has no spread", t->observations);
  return fmt::format("track record {} > {} over {} observations", z_text(*t->correlation),
                     z_text(tr.max_correlation), t->observations);
}

// Selection and the hysteresis band for names already held, over the
// passing lines (the first out.passed, by z): marks them, counts them in
// out.selected, and (when `words`) writes their notes. Returns how many the
// track record kept out that the threshold would select.
std::size_t select_lines(const Rule& rule, bool words, ScreenResult& out) {
  const auto& sel = rule.selection;
  const std::size_t passed = out.passed;
  std::size_t keep = 0;
  if (sel.by == SelectBy::count) keep = static_cast<std::size_t>(sel.count);
  if (sel.by == SelectBy::top_pct) {
    // ceil(top_pct % of n), exact, at least one name.
    const Decimal want = sel.top_pct * Decimal(static_cast<long long>(passed));
    const Decimal q = Decimal::divide(want, Decimal(100), 0);
    keep = static_cast<std::size_t>(std::stoll(q.str()));
    if (Decimal(static_cast<long long>(keep)) * Decimal(100) < want) ++keep;
    keep = std::max<std::size_t>(keep, 1);
  }
  const auto& tr = rule.track_record;
  std::size_t rank = 0;       // among the names the track record lets through
  std::size_t held_back = 0;  // names that would enter but for their track record
  for (std::size_t i = 0; i < passed; ++i) {
    auto& l = out.lines[i];
    const double z = *l.z;
    if (tr) {
      const auto& t = l.track;
      l.track_ok = t && t->observations >= tr->min_observations && t->correlation &&
                   *t->correlation <= tr->max_correlation;
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
      if (words) l.note = test() + ", but its " + track_why(l.track, *tr);
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
  return held_back;
}

// Why a screen that selected nothing selected nothing: the track record, or
// the threshold.
Refusal nothing_selected(const Rule& rule, const ScreenResult& out, std::size_t held_back) {
  const auto& tr = rule.track_record;
  const Date as_of = out.as_of;
  const std::size_t passed = out.passed;
  if (held_back > 0) {
    const auto failed = static_cast<std::size_t>(
        std::count_if(out.lines.begin(), out.lines.begin() + static_cast<std::ptrdiff_t>(passed),
                      [](const ScreenLine& l) { return !l.track_ok; }));
    return Refusal{
        "track_record.max_correlation",
        failed == passed
            ? fmt::format("selects no name on {}: all {} names passing the screen fail "
                          "the track record (fewer than {} observations, or a "
                          "correlation above {})",
                          as_of.str(), passed, tr->min_observations, z_text(tr->max_correlation))
            : fmt::format("selects no name on {}: the track record keeps out all {} "
                          "name{} the screen would select",
                          as_of.str(), held_back, held_back == 1 ? "" : "s")};
  }
  return Refusal{"select.z_max",
                 fmt::format("selects no name on {}: the lowest z among the {} names passing "
                             "the screen is {}",
                             as_of.str(), passed, z_text(*out.lines.front().z))};
}

// The z's of a screen of one metric across the universe, with the mean and
// sd in `out`; false when the values have no spread. Two passes (mean, then
// squared deviations): the textbook sample variance.
bool score_simple(const ScreenRule& s, std::vector<Scoring>& work,
                  const std::vector<std::size_t>& pass, ScreenResult& out) {
  double sum = 0;
  for (const std::size_t i : pass) sum += *work[i].value;
  const double n = static_cast<double>(pass.size());
  out.mean = sum / n;
  double ss = 0;
  for (const std::size_t i : pass) ss += (*work[i].value - out.mean) * (*work[i].value - out.mean);
  out.sd = std::sqrt(ss / (n - 1));
  if (!(out.sd > 0)) return false;
  const double sign = s.cheap == Cheap::low ? 1.0 : -1.0;
  for (const std::size_t i : pass) work[i].z = sign * (*work[i].value - out.mean) / out.sd;
  return true;
}

// Clips the passing values at the rule's percentiles (a screen of one
// metric), keeping the bounds in `out`.
void winsorize_simple(const ScreenRule& s, std::vector<Scoring>& work,
                      const std::vector<std::size_t>& pass, ScreenResult& out) {
  std::vector<double> sorted;
  sorted.reserve(pass.size());
  for (const std::size_t i : pass) sorted.push_back(*work[i].value);
  std::sort(sorted.begin(), sorted.end());
  out.clip_low = percentile(sorted, s.winsorize_pct->first);
  out.clip_high = percentile(sorted, s.winsorize_pct->second);
  for (const std::size_t i : pass)
    work[i].value = std::clamp(*work[i].value, *out.clip_low, *out.clip_high);
}

std::string too_few_text(std::size_t passed, Date as_of, int min_names) {
  return fmt::format("only {} name{} pass{} the screen on {}; the rule needs at least {}", passed,
                     passed == 1 ? "" : "s", passed == 1 ? "es" : "", as_of.str(), min_names);
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
  const auto metrics = s.metrics();
  const bool simple = metrics.size() == 1 && s.within == Within::universe;
  std::vector<Scoring> work(candidates.size());
  std::vector<std::size_t> pass, rest;  // indices of candidates and work
  pass.reserve(candidates.size());
  rest.reserve(candidates.size());
  for (std::size_t i = 0; i < candidates.size(); ++i) {
    if (!check(rule, metrics, simple, as_of, words, candidates[i], work[i])) {
      rest.push_back(i);
      continue;
    }
    work[i].passed = true;
    if (simple) work[i].value = candidates[i].figure->value.to_double();
    pass.push_back(i);
  }
  out.passed = pass.size();
  // A refused screen keeps its lines (nothing selected), so it can be shown:
  // passing names by z where both have one, else by symbol.
  auto refuse = [&](std::string key, std::string why) {
    out.refusal = Refusal{std::move(key), std::move(why)};
    out.selected = 0;
    sort_unless_sorted(pass, [&](std::size_t a, std::size_t b) {
      const auto &za = work[a].z, &zb = work[b].z;
      return za && zb && *za != *zb ? *za < *zb : candidates[a].symbol < candidates[b].symbol;
    });
    sort_unless_sorted(rest, [&](std::size_t a, std::size_t b) {
      return candidates[a].symbol < candidates[b].symbol;
    });
    build_lines(out, words, candidates, work, pass, rest);
  };
  if (pass.size() < static_cast<std::size_t>(s.min_names)) {
    refuse("screen.min_names", too_few_text(pass.size(), as_of, s.min_names));
    return out;
  }

  if (!simple) {
    for (const auto& m : metrics) out.scored_metrics.push_back(m.name);
    if (s.within != Within::universe) out.within = std::string(to_string(s.within));
    if (auto refusal = score_several(rule, as_of, words, candidates, work, pass, rest, out)) {
      out.passed = pass.size();
      refuse(refusal->key, refusal->why);
      return out;
    }
    out.passed = pass.size();
    if (pass.size() < static_cast<std::size_t>(s.min_names)) {
      refuse("screen.min_names", too_few_text(pass.size(), as_of, s.min_names));
      return out;
    }
    // The composite: standardised again across the passing names.
    const auto st = standardise(
        pass, pass, [&](std::size_t i) -> double& { return *work[i].value; },
        [&](std::size_t i, double z) { work[i].z = z; }, std::nullopt);
    if (!st) {
      refuse(s.metric_list.empty() ? "screen.metric" : "screen.metrics",
             fmt::format("all {} names passing the screen on {} have the same score; "
                         "z-scores need some spread",
                         pass.size(), as_of.str()));
      return out;
    }
    out.mean = st->mean;
    out.sd = st->sd;
  } else {
    if (s.winsorize_pct) winsorize_simple(s, work, pass, out);
    if (!score_simple(s, work, pass, out)) {
      refuse("screen.metric", fmt::format("all {} names passing the screen on {} have the same "
                                          "value; z-scores need some spread",
                                          pass.size(), as_of.str()));
      return out;
    }
  }
  sort_by_z(pass, work, candidates);
  sort_unless_sorted(rest, [&](std::size_t a, std::size_t b) {
    return candidates[a].symbol < candidates[b].symbol;
  });
  build_lines(out, words, candidates, work, pass, rest);

  const std::size_t held_back = select_lines(rule, words, out);
  if (out.selected == 0) {
    // The lines stay in their order: every passing name has its z.
    out.refusal = nothing_selected(rule, out, held_back);
  }
  return out;
}

namespace {

// Equal weights: one quotient for every selected name, share / n to 12
// places (what water filling gives for equal raw weights: all capped at
// max_weight when the quotient is above it, else none).
std::vector<Decimal> equal_weights(const WeightRule& w, std::size_t n, const Decimal& share,
                                   std::vector<bool>& capped) {
  capped.assign(n, false);
  if (n == 0) return {};
  const Decimal each = Decimal::divide(share, Decimal(static_cast<long long>(n)), 12);
  const bool cap = each > w.max_weight;
  if (cap) capped.assign(n, true);
  return std::vector<Decimal>(n, cap ? w.max_weight : each);
}

// Tilted weights: raw exp(-tilt * z) (a double statistic, brought into
// Decimal at 12 significant digits; only ratios matter), capped at
// max_weight with the excess shared among the uncapped names in proportion
// ("water filling"); at most one pass per name.
std::vector<Decimal> tilted_weights(const WeightRule& w,
                                    const std::vector<const ScreenLine*>& chosen,
                                    const Decimal& share, std::vector<bool>& capped) {
  std::vector<Decimal> raw;
  raw.reserve(chosen.size());
  for (const auto* l : chosen)
    raw.push_back(Decimal::parse(fmt::format("{:.12e}", std::exp(-w.tilt * *l->z))));
  std::vector<Decimal> weight(chosen.size());
  capped.assign(chosen.size(), false);
  Decimal left = share;
  for (std::size_t round = 0; round <= chosen.size(); ++round) {
    Decimal raw_sum;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i]) raw_sum += raw[i];
    if (raw_sum.is_zero()) break;
    for (std::size_t i = 0; i < chosen.size(); ++i)
      if (!capped[i]) weight[i] = Decimal::divide(left * raw[i], raw_sum, 12);
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
  return weight;
}

}  // namespace

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
  // The selected names, and the held ones that leave.
  std::vector<const ScreenLine*> chosen, exits;
  chosen.reserve(screened.selected);
  for (const auto& l : screened.lines) {
    if (l.selected)
      chosen.push_back(&l);
    else if (l.held)
      exits.push_back(&l);
  }
  out.reserve(w.sleeves.size() + chosen.size() + exits.size());
  for (std::size_t i = 0; i < w.sleeves.size(); ++i)
    out.push_back(Target{sleeve_ids.at(i), w.sleeves[i].symbol, w.sleeves[i].weight, true,
                         std::nullopt, false,
                         fmt::format("sleeve at {}", pct(w.sleeves[i].weight))});

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

  std::vector<bool> capped;
  std::vector<Decimal> weight = w.scheme == Scheme::equal
                                    ? equal_weights(w, chosen.size(), share, capped)
                                    : tilted_weights(w, chosen, share, capped);
  // Built in place: a back-test asks for targets every month.
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    const ScreenLine& l = *chosen[i];
    Target& t = out.emplace_back();
    t.security_id = l.security_id;
    t.symbol = l.symbol;
    t.weight = std::move(weight[i]);
    t.z = l.z;
    t.held = l.held;
    if (!screened.explained) continue;
    t.why = l.note;
    if (capped[i]) t.why += fmt::format(" (capped at {})", pct(w.max_weight));
  }
  for (const ScreenLine* l : exits) {
    Target& t = out.emplace_back();
    t.security_id = l->security_id;
    t.symbol = l->symbol;
    t.z = l->z;
    t.held = true;
    if (screened.explained) t.why = l->passed ? l->note : "excluded: " + l->excluded_reason;
  }
  return result;
}

}  // namespace keel::rules
