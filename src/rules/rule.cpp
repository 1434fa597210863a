#include "rules/rule.h"

#include <fmt/format.h>
#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <set>
#include <sstream>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "rules/tax_keys.h"

namespace keel::rules {
namespace {

// 1 basis point as a fraction, parsed once.
const Decimal& basis_point() {
  static const Decimal bp = Decimal::parse("0.0001");
  return bp;
}

// Every table and key of a rule file, with the default shown in messages
// about a key the file left out. Keep in step with docs/rules.md.
struct KeyInfo {
  std::string_view key;
  std::string_view default_text;
};
constexpr KeyInfo kKeys[] = {
    {"name", "the file name"},
    {"rebalance_months", "1"},
    {"scope", ""},
    {"scope.accounts", "none; required"},
    {"scope.symbols", "unset"},
    {"scope.sector", "unset"},
    {"screen", ""},
    {"screen.metric", "\"pe\""},
    {"screen.cheap", "\"low\""},
    {"screen.max_age_days", "180"},
    {"screen.exclude_non_positive", "true"},
    {"screen.min_names", "5"},
    {"screen.winsorize_pct", "unset"},
    {"screen.metrics", "unset"},
    {"screen.if_missing", "\"fail\""},
    {"screen.within", "unset"},
    {"screen.min_group_size", "5"},
    {"screen.small_groups", "\"fail\""},
    {"select", ""},
    {"select.by", "\"z\""},
    {"select.z_max", "-0.5"},
    {"select.count", "20"},
    {"select.top_pct", "20"},
    {"select.exit_z", "unset"},
    {"weights", ""},
    {"weights.scheme", "\"equal\""},
    {"weights.tilt", "1"},
    {"weights.max_weight_pct", "100"},
    {"sleeve", ""},
    {"sleeve.symbol", "none; required"},
    {"sleeve.weight_pct", "none; required"},
    {"sleeve.place", "\"any\""},
    {"trading", ""},
    {"trading.drift_pct_points", "0"},
    {"trading.drift_rel_pct", "0"},
    {"trading.min_trade", "0"},
    {"trading.cash_reserve_pct", "0"},
    {"trading.fractional", "false"},
    {"trading.fee_fixed", "0"},
    {"trading.fee_bps", "0"},
    {"trading.lot_order", "\"highest-cost\""},
    {"track_record", ""},
    {"track_record.window_months", "36"},
    {"track_record.horizon_months", "12"},
    {"track_record.max_correlation", "0"},
    {"track_record.min_observations", "24"},
    {"track_record.method", "\"pearson\""},
    {"track_record.returns", "\"relative\""},
    {"tax", ""},
    {"tax.sell_from", "\"any\""},
    {"tax.gain_cap", "unset"},
};

std::vector<std::string> keys_under(std::string_view table) {
  std::vector<std::string> out;
  for (const auto& k : kKeys) {
    const std::string_view key = k.key;
    const auto dot = key.find('.');
    if (table.empty() ? dot == std::string_view::npos
                      : (dot == table.size() && key.substr(0, dot) == table))
      out.emplace_back(table.empty() ? key : key.substr(dot + 1));
  }
  return out;
}

std::string join(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& s : items) out += (out.empty() ? "" : ", ") + s;
  return out;
}

const Rule::Setting* setting_of(const Rule& rule, std::string_view key) {
  for (const auto& s : rule.settings)
    if (s.key == key) return &s;
  return nullptr;
}

class Reader {
 public:
  explicit Reader(Rule& rule) : rule_(rule) {}

  [[noreturn]] void fail(const toml::node& node, std::string_view key, std::string_view why) const {
    if (const auto* s = setting_of(rule_, key))
      throw InputError(fmt::format("{}: key '{}': {}", printable(s->origin), printable(key), why));
    throw InputError(fmt::format("{}:{}: key '{}': {}", printable(rule_.source),
                                 node.source().begin.line, printable(key), why));
  }

  // Refuses keys not in the documented set, suggesting the nearest one.
  void only_known(const toml::table& t, std::string_view table) const {
    only_known(t, table, keys_under(table));
  }
  void only_known(const toml::table& t, std::string_view table,
                  const std::vector<std::string>& allowed) const {
    for (const auto& [k, v] : t) {
      const std::string name(k.str());
      if (std::find(allowed.begin(), allowed.end(), name) != allowed.end()) continue;
      const std::string full = table.empty() ? name : fmt::format("{}.{}", table, name);
      if (auto near = nearest(name, allowed))
        fail(v, full, fmt::format("unknown key; did you mean '{}'?", *near));
      fail(v, full, fmt::format("unknown key; expected one of: {}", join(allowed)));
    }
  }

  TaxFail tax_fail(std::string_view full) const {
    return [this, full = std::string(full)](const toml::node& n, std::string_view why) {
      fail(n, full, why);
    };
  }

  void seen(std::string_view key, const toml::node& node) {
    if (!setting_of(rule_, key)) rule_.lines[std::string(key)] = node.source().begin.line;
  }

  const toml::table* table(const toml::table& root, std::string_view key) {
    const auto* n = root.get(key);
    if (!n) return nullptr;
    const auto* t = n->as_table();
    if (!t) fail(*n, key, "must be a table");
    seen(key, *n);
    only_known(*t, key);
    return t;
  }

  std::optional<std::string> text(const toml::table& t, std::string_view table,
                                  std::string_view key) {
    const auto* n = t.get(key);
    if (!n) return std::nullopt;
    const std::string full = fmt::format("{}{}{}", table, table.empty() ? "" : ".", key);
    seen(full, *n);
    auto s = n->value<std::string>();
    if (!s || n->type() != toml::node_type::string) fail(*n, full, "must be a string");
    if (!valid_utf8(*s)) fail(*n, full, "must be valid UTF-8");
    last_ = n;
    return s;
  }

  // A closed set of words.
  template <typename E>
  std::optional<E> choice(const toml::table& t, std::string_view table, std::string_view key,
                          std::initializer_list<std::pair<std::string_view, E>> choices) {
    auto s = text(t, table, key);
    if (!s) return std::nullopt;
    std::vector<std::string> names;
    for (const auto& [word, value] : choices) {
      if (*s == word) return value;
      names.push_back(fmt::format("\"{}\"", word));
    }
    fail(*last_, fmt::format("{}.{}", table, key),
         fmt::format("'{}' is not one of {}", printable(*s), join(names)));
  }

  std::optional<bool> boolean(const toml::table& t, std::string_view table, std::string_view key) {
    const auto* n = t.get(key);
    if (!n) return std::nullopt;
    const std::string full = fmt::format("{}.{}", table, key);
    seen(full, *n);
    if (!n->is_boolean()) fail(*n, full, "must be true or false");
    return n->value<bool>();
  }

  std::optional<std::int64_t> integer(const toml::table& t, std::string_view table,
                                      std::string_view key, std::int64_t lo, std::int64_t hi) {
    const auto* n = t.get(key);
    if (!n) return std::nullopt;
    const std::string full = fmt::format("{}{}{}", table, table.empty() ? "" : ".", key);
    seen(full, *n);
    if (!n->is_integer())
      fail(*n, full, fmt::format("must be a whole number from {} to {}", lo, hi));
    const auto v = *n->value<std::int64_t>();
    if (v < lo || v > hi)
      fail(*n, full, fmt::format("{} is out of range; must be from {} to {}", v, lo, hi));
    return v;
  }

  // An integer or float, exactly as written where possible. `lo_open`/`hi_open`
  // make a bound exclusive.
  std::optional<Decimal> number(const toml::node* n, const std::string& full, const Decimal& lo,
                                bool lo_open, const Decimal& hi, bool hi_open) {
    if (!n) return std::nullopt;
    seen(full, *n);
    Decimal v;
    if (n->is_integer()) {
      v = Decimal(*n->value<std::int64_t>());
    } else if (n->is_floating_point()) {
      const double d = *n->value<double>();
      if (!std::isfinite(d)) fail(*n, full, "must be a finite number");
      v = Decimal::parse(fmt::format("{}", d));  // shortest text that reads back the same
    } else {
      fail(*n, full, "must be a number");
    }
    const bool below = lo_open ? v <= lo : v < lo;
    const bool above = hi_open ? v >= hi : v > hi;
    if (below || above)
      fail(*n, full,
           fmt::format("{} is out of range; must be {} {} and {} {}", v.str(),
                       lo_open ? "above" : "at least", lo.str(), hi_open ? "below" : "at most",
                       hi.str()));
    return v;
  }
  std::optional<Decimal> number(const toml::table& t, std::string_view table, std::string_view key,
                                const Decimal& lo, bool lo_open, const Decimal& hi, bool hi_open) {
    return number(t.get(key), fmt::format("{}.{}", table, key), lo, lo_open, hi, hi_open);
  }

  std::vector<std::string> text_list(const toml::table& t, std::string_view table,
                                     std::string_view key) {
    const auto* n = t.get(key);
    const std::string full = fmt::format("{}.{}", table, key);
    if (!n) return {};
    seen(full, *n);
    const auto* a = n->as_array();
    if (!a) fail(*n, full, "must be an array of strings");
    if (a->empty()) fail(*n, full, "must not be empty");
    std::vector<std::string> out;
    std::set<std::string> dup;
    for (const auto& item : *a) {
      auto s = item.value<std::string>();
      if (!s || item.type() != toml::node_type::string)
        fail(item, full, "must be an array of strings");
      if (s->empty() || !valid_utf8(*s)) fail(item, full, "entries must be non-empty UTF-8 text");
      if (!dup.insert(*s).second)
        fail(item, full, fmt::format("'{}' is listed twice", printable(*s)));
      out.push_back(*s);
    }
    return out;
  }

  const toml::node* last() const { return last_; }

 private:
  Rule& rule_;
  const toml::node* last_ = nullptr;
};

// screen.metrics: an array of inline tables { name, cheap, weight }.
void read_metrics(Reader& r, Rule& rule, const toml::table& screen) {
  const auto* n = screen.get("metrics");
  if (!n) return;
  r.seen("screen.metrics", *n);
  const auto* a = n->as_array();
  if (!a || a->empty() || !a->is_array_of_tables())
    r.fail(*n, "screen.metrics",
           "must be a list of metrics, e.g. [{ name = \"pe\", cheap = \"low\", weight = 1 }]");
  for (const char* key : {"metric", "cheap"})
    if (const auto* k = screen.get(key))
      r.fail(*k, fmt::format("screen.{}", key),
             "set the metric in screen.metrics when it is given, not here");
  for (const auto& item : *a) {
    const auto& t = *item.as_table();
    r.only_known(t, "screen.metrics", {"name", "cheap", "weight"});
    MetricSpec m;
    const auto name = r.text(t, "screen.metrics", "name");
    if (!name || name->empty() || name->size() > 60)
      r.fail(item, "screen.metrics.name", "required: the metric's name, 1 to 60 characters");
    m.name = *name;
    for (const auto& other : rule.screen.metric_list)
      if (other.name == m.name)
        r.fail(item, "screen.metrics",
               fmt::format("metric '{}' is listed twice", printable(m.name)));
    if (auto c = r.choice<Cheap>(t, "screen.metrics", "cheap",
                                 {{"low", Cheap::low}, {"high", Cheap::high}}))
      m.cheap = *c;
    if (auto w = r.number(t, "screen.metrics", "weight", Decimal(0), true, Decimal(1000), false))
      m.weight = w->to_double();
    rule.screen.metric_list.push_back(std::move(m));
  }
  // The rest of keel names the first metric (messages, what a series loads).
  rule.lines["screen.metric"] = rule.lines["screen.metrics"];
  rule.screen.metric = rule.screen.metric_list.front().name;
  rule.screen.cheap = rule.screen.metric_list.front().cheap;
}

}  // namespace

std::string_view to_string(SelectBy by) {
  switch (by) {
    case SelectBy::z:
      return "z";
    case SelectBy::count:
      return "count";
    case SelectBy::top_pct:
      return "top_pct";
  }
  return "";
}

std::string_view to_string(Within within) {
  switch (within) {
    case Within::universe:
      return "universe";
    case Within::sector:
      return "sector";
    case Within::country:
      return "country";
  }
  return "";
}

std::string_view to_string(LotOrder order) {
  switch (order) {
    case LotOrder::highest_cost:
      return "highest-cost";
    case LotOrder::long_held:
      return "long-held";
    case LotOrder::losses_first:
      return "losses-first";
  }
  return "";
}

bool Rule::tax_keys() const {
  return tax.any() || std::any_of(weights.sleeves.begin(), weights.sleeves.end(),
                                  [](const Sleeve& s) { return s.place_deferred; });
}

Decimal WeightRule::sleeve_total() const {
  Decimal total;
  for (const auto& s : sleeves) total += s.weight;
  return total;
}

Decimal TradingRule::fee(const Decimal& value) const {
  if (value.is_zero()) return Decimal();
  // Estimates are money: half-to-even to the cent.
  return (fee_fixed + value * fee_bps * basis_point()).rounded(2);
}

std::string Rule::where(std::string_view key) const {
  if (const auto* s = setting_of(*this, key))
    return fmt::format("{}: key '{}'", printable(s->origin), key);
  const auto it = lines.find(std::string(key));
  if (it != lines.end()) return fmt::format("{}:{}: key '{}'", printable(source), it->second, key);
  std::string_view def = "unset";
  for (const auto& k : kKeys)
    if (k.key == key) def = k.default_text;
  return fmt::format("{}: key '{}' (default {})", printable(source), key, def);
}

void Rule::fail(std::string_view key, std::string_view why) const {
  throw InputError(fmt::format("{}: {}", where(key), why));
}

std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diag = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diag + (a[i - 1] == b[j - 1] ? 0 : 1)});
      diag = up;
    }
  }
  return row[b.size()];
}

std::optional<std::string> nearest(std::string_view word, const std::vector<std::string>& choices) {
  std::optional<std::string> best;
  std::size_t best_d = 0;
  for (const auto& c : choices) {
    const std::size_t d = edit_distance(word, c);
    if (!best || d < best_d) best = c, best_d = d;
  }
  // A likely typo: a third of the longer word at most (at least 2 edits), or
  // the word is a prefix of the choice ("max_age" for "max_age_days").
  if (!best) return std::nullopt;
  const std::size_t limit = std::max<std::size_t>(2, std::max(word.size(), best->size()) / 3);
  if (best_d <= limit) return best;
  for (const auto& c : choices)
    if (word.size() >= 3 && c.rfind(word, 0) == 0) return c;
  return std::nullopt;
}

namespace {
Rule read_rule(const toml::table& root, Rule rule);
}  // namespace

Rule load_rule(const std::filesystem::path& path) {
  if (is_standard_input(path)) return parse_rule(standard_input_text(), input_name(path));
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(fmt::format("{}: cannot open rule file", printable(path.string())));
  std::ostringstream ss;
  ss << in.rdbuf();
  return parse_rule(ss.str(), path.string());
}

Rule parse_rule(std::string_view toml_text, std::string source) {
  Rule rule;
  rule.source = std::move(source);
  rule.text = std::string(toml_text);
  toml::table root;
  try {
    root = toml::parse(toml_text, rule.source);
  } catch (const toml::parse_error& e) {
    throw InputError(fmt::format("{}:{}:{}: not valid TOML: {}", printable(rule.source),
                                 e.source().begin.line, e.source().begin.column,
                                 printable(e.description())));
  }
  return read_rule(root, std::move(rule));
}

Rule with_setting(const Rule& rule, std::string_view key, std::string_view value,
                  std::string_view option) {
  std::vector<std::string> known;
  for (const auto& k : kKeys)
    if (!k.default_text.empty() && !k.key.starts_with("sleeve.")) known.emplace_back(k.key);
  if (std::find(known.begin(), known.end(), key) == known.end()) {
    if (key.starts_with("sleeve."))
      throw InputError(fmt::format("{}: '{}' cannot be set here: a rule may have several sleeves",
                                   option, printable(key)));
    const auto near = nearest(key, known);
    throw InputError(fmt::format(
        "{}: '{}' is not a rule key{}", option, printable(key),
        near ? fmt::format("; did you mean '{}'?", *near) : "; see docs/rules.md for every key"));
  }
  Rule out;
  out.source = rule.source;
  out.text = rule.text;
  out.settings = rule.settings;
  std::erase_if(out.settings, [&](const Rule::Setting& s) { return s.key == key; });
  out.settings.push_back(Rule::Setting{std::string(key), std::string(value),
                                       fmt::format("{} {}={}", option, key, value)});
  toml::table root = toml::parse(out.text, out.source);
  for (const auto& s : out.settings) {
    toml::table* table = &root;
    std::string_view leaf = s.key;
    if (const auto dot = leaf.find('.'); dot != std::string_view::npos) {
      const std::string name(leaf.substr(0, dot));
      leaf = leaf.substr(dot + 1);
      if (!root.contains(name)) root.insert(name, toml::table{});
      table = root.get(name)->as_table();
      if (!table) continue;  // reading the file refuses the key that is not a table
    }
    toml::table value_doc;
    try {
      value_doc = toml::parse("v = " + s.value, s.origin);
    } catch (const toml::parse_error&) {
      table->insert_or_assign(leaf, s.value);
      continue;
    }
    value_doc.get("v")->visit([&](const auto& v) { table->insert_or_assign(leaf, v); });
  }
  return read_rule(root, std::move(out));
}

namespace {

Rule read_rule(const toml::table& root, Rule rule) {
  Reader r(rule);
  r.only_known(root, "");

  rule.name = std::filesystem::path(rule.source).stem().string();
  if (auto s = r.text(root, "", "name")) {
    if (s->empty() || s->size() > 200)
      r.fail(*root.get("name"), "name", "must be 1 to 200 characters");
    rule.name = *s;
  }
  if (auto v = r.integer(root, "", "rebalance_months", 1, 120))
    rule.rebalance_months = static_cast<int>(*v);

  // scope
  const auto* scope = r.table(root, "scope");
  if (!scope || !scope->get("accounts"))
    throw InputError(
        fmt::format("{}: key 'scope.accounts': required; name the accounts the rule manages, e.g. "
                    "accounts = [\"Brokerage\"]",
                    printable(rule.source)));
  rule.accounts = r.text_list(*scope, "scope", "accounts");
  const auto* symbols = scope->get("symbols");
  const auto* sector = scope->get("sector");
  if (symbols && sector)
    r.fail(*sector, "scope.sector", "set either 'symbols' or 'sector', not both");
  if (symbols) {
    rule.universe = Universe::list;
    rule.symbols = r.text_list(*scope, "scope", "symbols");
  } else if (sector) {
    rule.universe = Universe::sector;
    rule.sector = *r.text(*scope, "scope", "sector");
    if (rule.sector.empty()) r.fail(*sector, "scope.sector", "must not be empty");
  }

  // screen
  if (const auto* t = r.table(root, "screen")) {
    if (auto s = r.text(*t, "screen", "metric")) {
      if (s->empty() || s->size() > 60)
        r.fail(*t->get("metric"), "screen.metric", "must be 1 to 60 characters");
      rule.screen.metric = *s;
    }
    if (auto c =
            r.choice<Cheap>(*t, "screen", "cheap", {{"low", Cheap::low}, {"high", Cheap::high}}))
      rule.screen.cheap = *c;
    if (auto v = r.integer(*t, "screen", "max_age_days", 1, 3660))
      rule.screen.max_age_days = static_cast<int>(*v);
    if (auto b = r.boolean(*t, "screen", "exclude_non_positive"))
      rule.screen.exclude_non_positive = *b;
    if (auto v = r.integer(*t, "screen", "min_names", 2, 1000000))
      rule.screen.min_names = static_cast<int>(*v);
    if (const auto* w = t->get("winsorize_pct")) {
      r.seen("screen.winsorize_pct", *w);
      const auto* a = w->as_array();
      if (!a || a->size() != 2)
        r.fail(*w, "screen.winsorize_pct", "must be two percentiles, e.g. [5, 95]");
      const auto lo =
          r.number(a->get(0), "screen.winsorize_pct", Decimal(0), false, Decimal(100), false);
      const auto hi =
          r.number(a->get(1), "screen.winsorize_pct", Decimal(0), false, Decimal(100), false);
      if (*lo >= *hi)
        r.fail(*w, "screen.winsorize_pct",
               fmt::format("the lower percentile {} must be below the upper {}", lo->str(),
                           hi->str()));
      rule.lines["screen.winsorize_pct"] = w->source().begin.line;
      rule.screen.winsorize_pct = std::pair{lo->to_double(), hi->to_double()};
    }
    read_metrics(r, rule, *t);
    if (auto m = r.choice<IfMissing>(
            *t, "screen", "if_missing",
            {{"fail", IfMissing::fail}, {"score_available", IfMissing::score_available}}))
      rule.screen.if_missing = *m;
    if (auto w = r.text(*t, "screen", "within")) {
      const std::vector<std::string> fields{"sector", "country"};
      if (*w == "sector")
        rule.screen.within = Within::sector;
      else if (*w == "country")
        rule.screen.within = Within::country;
      else if (auto near = nearest(*w, fields))
        r.fail(
            *t->get("within"), "screen.within",
            fmt::format("securities have no field '{}'; did you mean '{}'?", printable(*w), *near));
      else
        r.fail(*t->get("within"), "screen.within",
               fmt::format("securities have no field '{}'; z-scores can run within \"sector\" "
                           "or \"country\"",
                           printable(*w)));
    }
    if (auto v = r.integer(*t, "screen", "min_group_size", 2, 1000000))
      rule.screen.min_group_size = static_cast<int>(*v);
    if (auto g = r.choice<SmallGroups>(
            *t, "screen", "small_groups",
            {{"fail", SmallGroups::fail}, {"whole_universe", SmallGroups::whole_universe}}))
      rule.screen.small_groups = *g;
    for (std::string_view key : {"min_group_size", "small_groups"})
      if (const auto* n = t->get(key); n && rule.screen.within == Within::universe)
        r.fail(*n, fmt::format("screen.{}", key), "applies only with screen.within");
  }

  // select
  const Decimal ten(10);
  if (const auto* t = r.table(root, "select")) {
    if (auto b = r.choice<SelectBy>(
            *t, "select", "by",
            {{"z", SelectBy::z}, {"count", SelectBy::count}, {"top_pct", SelectBy::top_pct}}))
      rule.selection.by = *b;
    if (auto v = r.number(*t, "select", "z_max", -ten, false, ten, false))
      rule.selection.z_max = v->to_double();
    if (auto v = r.integer(*t, "select", "count", 1, 1000000))
      rule.selection.count = static_cast<int>(*v);
    if (auto v = r.number(*t, "select", "top_pct", Decimal(0), true, Decimal(100), false))
      rule.selection.top_pct = *v;
    if (auto v = r.number(*t, "select", "exit_z", -ten, false, ten, false)) {
      rule.selection.exit_z = v->to_double();
      if (rule.selection.by == SelectBy::z && *rule.selection.exit_z < rule.selection.z_max)
        r.fail(*t->get("exit_z"), "select.exit_z",
               fmt::format("{} is below select.z_max ({}); the exit threshold must be at or "
                           "above the entry threshold",
                           v->str(), rule.selection.z_max));
    }
    // A key for another method is most likely a mistake.
    const std::pair<std::string_view, SelectBy> method_keys[] = {
        {"z_max", SelectBy::z}, {"count", SelectBy::count}, {"top_pct", SelectBy::top_pct}};
    for (const auto& [key, by] : method_keys)
      if (const auto* n = t->get(key); n && by != rule.selection.by)
        r.fail(*n, fmt::format("select.{}", key),
               fmt::format("applies only with by = \"{}\" (this rule selects by \"{}\")",
                           to_string(by), to_string(rule.selection.by)));
  }

  // weights
  if (const auto* t = r.table(root, "weights")) {
    if (auto s = r.choice<Scheme>(*t, "weights", "scheme",
                                  {{"equal", Scheme::equal}, {"tilt", Scheme::tilt}}))
      rule.weights.scheme = *s;
    if (auto v = r.number(*t, "weights", "tilt", Decimal(0), true, Decimal(5), false)) {
      if (rule.weights.scheme != Scheme::tilt)
        r.fail(*t->get("tilt"), "weights.tilt", "applies only with scheme = \"tilt\"");
      rule.weights.tilt = v->to_double();
    }
    if (auto v = r.number(*t, "weights", "max_weight_pct", Decimal(0), true, Decimal(100), false))
      rule.weights.max_weight = Decimal::divide(*v, Decimal(100), 12);
  }

  // sleeves: [[sleeve]] tables
  if (const auto* n = root.get("sleeve")) {
    r.seen("sleeve", *n);
    const auto* a = n->as_array();
    if (!a || !a->is_array_of_tables())
      r.fail(*n, "sleeve", "must be written as [[sleeve]] tables");
    std::set<std::string> seen;
    for (const auto& item : *a) {
      const auto& t = *item.as_table();
      r.only_known(t, "sleeve");
      const auto sym = r.text(t, "sleeve", "symbol");
      if (!sym || sym->empty()) r.fail(item, "sleeve.symbol", "required: the security held");
      if (!seen.insert(*sym).second)
        r.fail(*t.get("symbol"), "sleeve.symbol",
               fmt::format("'{}' has two sleeves", printable(*sym)));
      const auto w = r.number(t, "sleeve", "weight_pct", Decimal(0), true, Decimal(100), true);
      if (!w) r.fail(item, "sleeve.weight_pct", "required: the sleeve's share of the pool");
      rule.weights.sleeves.push_back(Sleeve{*sym, Decimal::divide(*w, Decimal(100), 12)});
      if (const auto* p = t.get("place")) {
        r.seen("sleeve.place", *p);
        rule.weights.sleeves.back().place_deferred =
            read_deferred_first(*p, r.tax_fail("sleeve.place"));
      }
      if (rule.weights.sleeve_total() >= Decimal(1))
        r.fail(*t.get("weight_pct"), "sleeve.weight_pct",
               fmt::format("weights cannot sum to one: the sleeves take {}% of the pool, "
                           "leaving nothing for the screened names",
                           (rule.weights.sleeve_total() * Decimal(100)).str()));
    }
    for (const auto& s : rule.weights.sleeves)
      if (std::find(rule.symbols.begin(), rule.symbols.end(), s.symbol) != rule.symbols.end())
        r.fail(*n, "sleeve.symbol",
               fmt::format("'{}' is also in scope.symbols; a name is either screened or a sleeve",
                           printable(s.symbol)));
  }

  // A cap that cannot add up: count names x cap below the screened share.
  const Decimal share = Decimal(1) - rule.weights.sleeve_total();
  if (rule.selection.by == SelectBy::count &&
      Decimal(rule.selection.count) * rule.weights.max_weight < share)
    rule.fail("weights.max_weight_pct",
              fmt::format("weights cannot sum to one: {} names x {}% = {}% is less than the {}% "
                          "the screened names must fill",
                          rule.selection.count, (rule.weights.max_weight * Decimal(100)).str(),
                          (Decimal(rule.selection.count) * rule.weights.max_weight * Decimal(100))
                              .rounded(6)
                              .str(),
                          (share * Decimal(100)).str()));

  // trading
  if (const auto* t = r.table(root, "trading")) {
    auto& g = rule.trading;
    const Decimal zero;
    if (auto v = r.number(*t, "trading", "drift_pct_points", zero, false, Decimal(100), false))
      g.drift_pct_points = *v;
    if (auto v = r.number(*t, "trading", "drift_rel_pct", zero, false, Decimal(1000), false))
      g.drift_rel_pct = *v;
    if (auto v = r.number(*t, "trading", "min_trade", zero, false, Decimal(1000000000), false))
      g.min_trade = *v;
    if (auto v = r.number(*t, "trading", "cash_reserve_pct", zero, false, Decimal(100), true))
      g.cash_reserve_pct = *v;
    if (auto b = r.boolean(*t, "trading", "fractional")) g.fractional = *b;
    if (auto v = r.number(*t, "trading", "fee_fixed", zero, false, Decimal(1000000), false))
      g.fee_fixed = *v;
    if (auto v = r.number(*t, "trading", "fee_bps", zero, false, Decimal(1000), false))
      g.fee_bps = *v;
    if (auto o = r.choice<LotOrder>(*t, "trading", "lot_order",
                                    {{"highest-cost", LotOrder::highest_cost},
                                     {"long-held", LotOrder::long_held},
                                     {"losses-first", LotOrder::losses_first}}))
      g.lot_order = *o;
  }

  // tax keys, read as a plan reads them (rules/tax_keys.h)
  if (const auto* t = r.table(root, "tax")) {
    if (const auto* v = t->get("sell_from")) {
      r.seen("tax.sell_from", *v);
      rule.tax.sell_deferred_first = read_deferred_first(*v, r.tax_fail("tax.sell_from"));
    }
    if (const auto* v = t->get("gain_cap")) {
      r.seen("tax.gain_cap", *v);
      rule.tax.gain_cap = read_gain_cap(*v, r.tax_fail("tax.gain_cap"));
    }
  }

  // track record
  if (const auto* t = r.table(root, "track_record")) {
    TrackRecordRule tr;
    if (auto v = r.integer(*t, "track_record", "window_months", 2, 600))
      tr.window_months = static_cast<int>(*v);
    if (auto v = r.integer(*t, "track_record", "horizon_months", 1, 240))
      tr.horizon_months = static_cast<int>(*v);
    if (auto v =
            r.number(*t, "track_record", "max_correlation", Decimal(-1), false, Decimal(1), false))
      tr.max_correlation = v->to_double();
    if (auto v = r.integer(*t, "track_record", "min_observations", 3, 600))
      tr.min_observations = static_cast<int>(*v);
    if (auto m = r.choice<Correlation>(
            *t, "track_record", "method",
            {{"pearson", Correlation::pearson}, {"spearman", Correlation::spearman}}))
      tr.method = *m;
    if (auto m = r.choice<TrackReturns>(*t, "track_record", "returns",
                                        {{"relative", TrackReturns::relative},
                                         {"absolute", TrackReturns::absolute},
                                         {"zscore", TrackReturns::zscore}}))
      tr.returns = *m;
    rule.track_record = tr;
    if (tr.window_months < tr.horizon_months)
      rule.fail("track_record.window_months",
                fmt::format("{} months is shorter than track_record.horizon_months ({}); each "
                            "observation's return must end inside the window",
                            tr.window_months, tr.horizon_months));
    if (tr.min_observations > tr.max_observations())
      rule.fail("track_record.min_observations",
                fmt::format("{} is more than the window allows: {} months less a horizon of {} "
                            "leave at most {} monthly observations",
                            tr.min_observations, tr.window_months, tr.horizon_months,
                            std::max(0, tr.max_observations())));
  }
  return rule;
}

}  // namespace

}  // namespace keel::rules
