#include "io/mapping.h"

#include <fmt/format.h>
#include <toml++/toml.h>

#include <array>
#include <fstream>
#include <sstream>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "model/records.h"

namespace keel::io {
namespace {

struct Ctx {
  const std::string& source;
  [[noreturn]] void fail(const toml::node& node, std::string_view key, std::string_view why) const {
    throw InputError(fmt::format("{}:{}: key '{}': {}", printable(source), node.source().begin.line,
                                 printable(key), why));
  }
};

void only_keys(const Ctx& ctx, const toml::table& t, std::string_view where,
               std::initializer_list<std::string_view> allowed) {
  for (const auto& [k, v] : t) {
    bool ok = false;
    for (auto a : allowed) ok = ok || k.str() == a;
    if (!ok) {
      std::string list;
      for (auto a : allowed) list += (list.empty() ? "" : ", ") + std::string(a);
      ctx.fail(v, where.empty() ? std::string(k.str()) : fmt::format("{}.{}", where, k.str()),
               fmt::format("unknown key; expected one of: {}", list));
    }
  }
}

std::string text(const Ctx& ctx, const toml::node& n, std::string_view key) {
  if (auto s = n.value<std::string>()) return *s;
  ctx.fail(n, key, "must be a string");
}

const toml::table& table(const Ctx& ctx, const toml::node& n, std::string_view key) {
  if (const auto* t = n.as_table()) return *t;
  ctx.fail(n, key, "must be a table");
}

std::vector<std::string> text_list(const Ctx& ctx, const toml::node& n, std::string_view key) {
  const auto* a = n.as_array();
  if (!a) ctx.fail(n, key, "must be an array of strings");
  std::vector<std::string> out;
  for (const auto& item : *a) out.push_back(text(ctx, item, key));
  return out;
}

char one_char(const Ctx& ctx, const toml::node& n, std::string_view key, bool allow_empty) {
  const std::string s = text(ctx, n, key);
  if (s.empty() && allow_empty) return 0;
  if (s.size() != 1 || s[0] == '"' || s[0] == '\n' || s[0] == '\r')
    ctx.fail(n, key, "must be a single character (not a quote or line break)");
  return s[0];
}

std::size_t line_of(const toml::node& n) {
  return static_cast<std::size_t>(n.source().begin.line);
}

FigureSource figure_source(const Ctx& ctx, const toml::node& n, const std::string& key) {
  FigureSource f;
  if (n.is_string()) {
    f.column = ascii_lower(text(ctx, n, key));
    if (f.column.empty()) ctx.fail(n, key, "names no column");
    return f;
  }
  const auto* t = n.as_table();
  if (!t) ctx.fail(n, key, "must be a column name or { credit = \"...\", debit = \"...\" }");
  only_keys(ctx, *t, key, {"credit", "debit"});
  const auto* c = t->get("credit");
  const auto* d = t->get("debit");
  if (!c || !d) ctx.fail(n, key, "needs both 'credit' and 'debit' columns");
  f.credit = ascii_lower(text(ctx, *c, key + ".credit"));
  f.debit = ascii_lower(text(ctx, *d, key + ".debit"));
  if (f.credit.empty() || f.debit.empty() || f.credit == f.debit)
    ctx.fail(n, key, "'credit' and 'debit' must name two different columns");
  return f;
}

FigureSign figure_sign(const Ctx& ctx, const toml::node& n, const std::string& key) {
  const std::string v = text(ctx, n, key);
  if (v == "positive") return FigureSign::positive;
  if (v == "negative") return FigureSign::negative;
  if (v == "either") return FigureSign::either;
  ctx.fail(n, key,
           fmt::format("'{}' is not a sign; expected positive, negative or either", printable(v)));
}

constexpr std::array<std::string_view, 4> kFigures = {"quantity", "price", "amount", "fee"};

ActionRule action_rule(const Ctx& ctx, const toml::node& n) {
  const std::string key = "actions.rule";
  const auto& t = table(ctx, n, key);
  only_keys(ctx, t, key,
            {"when", "kind", "when_amount", "quantity", "price", "amount", "fee", "sign"});
  ActionRule r;
  r.line = line_of(n);
  const auto* when = t.get("when");
  if (!when) ctx.fail(n, key, "needs 'when': the action value(s) this rule books");
  if (when->is_string())
    r.when.push_back(text(ctx, *when, key + ".when"));
  else
    r.when = text_list(ctx, *when, key + ".when");
  if (r.when.empty()) ctx.fail(*when, key + ".when", "names no action");
  for (const auto& w : r.when)
    if (w.empty()) ctx.fail(*when, key + ".when", "an action value must not be empty");
  const auto* kind = t.get("kind");
  if (!kind)
    ctx.fail(
        n, key,
        fmt::format("action '{}' goes to no kind; add kind = \"...\"", printable(r.when.front())));
  r.kind = ascii_lower(text(ctx, *kind, key + ".kind"));
  try {
    (void)parse_txn_kind(r.kind);
  } catch (const InputError& e) {
    ctx.fail(*kind, key + ".kind",
             fmt::format("action '{}' goes to no kind: {}", printable(r.when.front()), e.what()));
  }
  for (auto figure : kFigures)
    if (const auto* f = t.get(figure))
      r.figures[std::string(figure)] = figure_source(ctx, *f, fmt::format("{}.{}", key, figure));
  if (const auto* a = t.get("when_amount")) {
    const std::string v = text(ctx, *a, key + ".when_amount");
    if (v != "negative" && v != "positive")
      ctx.fail(*a, key + ".when_amount", "must be \"negative\" or \"positive\"");
    if (!r.figures.count("amount"))
      ctx.fail(*a, key + ".when_amount", "needs the rule's 'amount' column to test");
    r.when_amount_negative = v == "negative";
  }
  if (const auto* sign = t.get("sign")) {
    if (sign->is_string()) {
      const FigureSign all = figure_sign(ctx, *sign, key + ".sign");
      for (const auto& [figure, source] : r.figures) r.signs[figure] = all;
    } else {
      const auto& st = table(ctx, *sign, key + ".sign");
      only_keys(ctx, st, key + ".sign", {"quantity", "price", "amount", "fee"});
      for (const auto& [figure, v] : st) {
        const std::string fk = fmt::format("{}.sign.{}", key, figure.str());
        if (!r.figures.count(std::string(figure.str())))
          ctx.fail(v, fk, "the rule reads no such figure");
        r.signs[std::string(figure.str())] = figure_sign(ctx, v, fk);
      }
    }
  }
  return r;
}

ActionRules action_rules(const Ctx& ctx, const toml::node& n) {
  const auto& t = table(ctx, n, "actions");
  only_keys(ctx, t, "actions", {"column", "skip", "rule"});
  ActionRules a;
  const auto* column = t.get("column");
  if (!column) ctx.fail(n, "actions", "needs 'column': the file's column that names the action");
  a.column = ascii_lower(text(ctx, *column, "actions.column"));
  if (const auto* skip = t.get("skip")) a.skip = text_list(ctx, *skip, "actions.skip");
  const auto* rules = t.get("rule");
  if (!rules || !rules->is_array_of_tables())
    ctx.fail(n, "actions", "needs at least one [[actions.rule]]");
  for (const auto& r : *rules->as_array()) a.rules.push_back(action_rule(ctx, r));

  // Each row must match at most one rule: the same action (compared without
  // regard to ASCII case) in two rules is allowed only when their
  // when_amount signs differ.
  auto fail_at = [&](const ActionRule& r, std::string why) -> void {
    throw InputError(
        fmt::format("{}:{}: key 'actions.rule': {}", printable(ctx.source), r.line, why));
  };
  for (std::size_t j = 0; j < a.rules.size(); ++j) {
    const ActionRule& rj = a.rules[j];
    for (const auto& w : rj.when) {
      const std::string lw = ascii_lower(w);
      for (const auto& s : a.skip)
        if (ascii_lower(s) == lw)
          fail_at(rj, fmt::format("action '{}' is also listed in actions.skip", printable(w)));
      for (std::size_t i = 0; i <= j; ++i) {
        const ActionRule& ri = a.rules[i];
        std::size_t same = 0;
        for (const auto& v : ri.when) same += ascii_lower(v) == lw;
        if (i == j ? same < 2 : same == 0) continue;
        const bool disjoint = i != j && ri.when_amount_negative && rj.when_amount_negative &&
                              *ri.when_amount_negative != *rj.when_amount_negative;
        if (disjoint) continue;
        fail_at(rj, i == j ? fmt::format("action '{}' is named twice", printable(w))
                           : fmt::format("matches the same rows as the rule on line {} "
                                         "(action '{}')",
                                         ri.line, printable(w)));
      }
    }
  }
  return a;
}

}  // namespace

Mapping Mapping::load(const std::filesystem::path& path) {
  if (is_standard_input(path)) return parse(standard_input_text(), input_name(path));
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(fmt::format("{}: cannot open mapping file", printable(path.string())));
  std::ostringstream ss;
  ss << in.rdbuf();
  return parse(ss.str(), path.string());
}

Mapping Mapping::parse(std::string_view toml_text, std::string source) {
  Mapping m;
  m.source = std::move(source);
  toml::table root;
  try {
    root = toml::parse(toml_text, m.source);
  } catch (const toml::parse_error& e) {
    throw InputError(fmt::format("{}:{}:{}: not valid TOML: {}", printable(m.source),
                                 e.source().begin.line, e.source().begin.column,
                                 printable(e.description())));
  }
  const Ctx ctx{m.source};
  only_keys(ctx, root, "",
            {"for", "file", "columns", "ignore", "dates", "numbers", "values", "signs", "defaults",
             "actions"});
  if (const auto* n = root.get("for")) m.applies_to = text(ctx, *n, "for");

  if (const auto* n = root.get("file")) {
    const auto& t = table(ctx, *n, "file");
    only_keys(ctx, t, "file", {"delimiter", "skip_lines", "skip_rows_where"});
    if (const auto* d = t.get("delimiter"))
      m.delimiter = one_char(ctx, *d, "file.delimiter", false);
    if (const auto* s = t.get("skip_lines")) {
      const auto v = s->value<std::int64_t>();
      if (!v || *v < 0 || *v > 1000)
        ctx.fail(*s, "file.skip_lines", "must be a whole number from 0 to 1000");
      m.skip_before_header = static_cast<std::size_t>(*v);
    }
    if (const auto* w = t.get("skip_rows_where")) {
      const auto& wt = table(ctx, *w, "file.skip_rows_where");
      only_keys(ctx, wt, "file.skip_rows_where", {"column", "values"});
      const auto* c = wt.get("column");
      const auto* v = wt.get("values");
      if (!c || !v) ctx.fail(*w, "file.skip_rows_where", "needs both 'column' and 'values'");
      m.skip_when = SkipRule{ascii_lower(text(ctx, *c, "file.skip_rows_where.column")),
                             text_list(ctx, *v, "file.skip_rows_where.values")};
    }
  }

  if (const auto* n = root.get("columns")) {
    for (const auto& [k, v] : table(ctx, *n, "columns")) {
      const std::string key = fmt::format("columns.{}", k.str());
      m.rename[ascii_lower(k.str())] = ascii_lower(text(ctx, v, key));
    }
  }
  if (const auto* n = root.get("ignore"))
    for (auto& s : text_list(ctx, *n, "ignore")) m.ignore.push_back(ascii_lower(s));

  if (const auto* n = root.get("dates")) {
    const auto& t = table(ctx, *n, "dates");
    only_keys(ctx, t, "dates", {"format"});
    if (const auto* f = t.get("format")) {
      try {
        m.date_format = DateFormat(text(ctx, *f, "dates.format"));
      } catch (const InputError& e) {
        ctx.fail(*f, "dates.format", e.what());
      }
    }
  }

  if (const auto* n = root.get("numbers")) {
    const auto& t = table(ctx, *n, "numbers");
    only_keys(ctx, t, "numbers", {"decimal_mark", "thousands"});
    if (const auto* d = t.get("decimal_mark")) {
      m.decimal_mark = one_char(ctx, *d, "numbers.decimal_mark", false);
      if (m.decimal_mark != '.' && m.decimal_mark != ',')
        ctx.fail(*d, "numbers.decimal_mark", "must be \".\" or \",\"");
    }
    if (const auto* s = t.get("thousands")) {
      m.thousands = one_char(ctx, *s, "numbers.thousands", true);
      if (m.thousands != 0 && m.thousands == m.decimal_mark)
        ctx.fail(*s, "numbers.thousands", "must differ from the decimal mark");
      if (m.thousands == '-' || m.thousands == '+' || (m.thousands >= '0' && m.thousands <= '9'))
        ctx.fail(*s, "numbers.thousands", "must not be a digit or sign");
    }
    if (m.thousands == m.decimal_mark) m.thousands = 0;
  }

  if (const auto* n = root.get("values")) {
    for (const auto& [col, v] : table(ctx, *n, "values")) {
      auto& out = m.values[ascii_lower(col.str())];
      for (const auto& [from, to] : table(ctx, v, fmt::format("values.{}", col.str())))
        out[ascii_lower(from.str())] =
            text(ctx, to, fmt::format("values.{}.{}", col.str(), from.str()));
    }
  }

  if (const auto* n = root.get("signs")) {
    const auto& t = table(ctx, *n, "signs");
    only_keys(ctx, t, "signs", {"negate", "kind_from_sign"});
    if (const auto* g = t.get("negate"))
      for (auto& s : text_list(ctx, *g, "signs.negate")) m.negate.push_back(ascii_lower(s));
    if (const auto* k = t.get("kind_from_sign")) {
      const auto& kt = table(ctx, *k, "signs.kind_from_sign");
      only_keys(ctx, kt, "signs.kind_from_sign", {"column", "sets", "negative", "positive"});
      SignRule r;
      for (auto [name, field] :
           {std::pair{"column", &r.from}, std::pair{"sets", &r.sets},
            std::pair{"negative", &r.negative}, std::pair{"positive", &r.positive}}) {
        const auto* f = kt.get(name);
        if (!f)
          ctx.fail(*k, "signs.kind_from_sign", "needs 'column', 'sets', 'negative' and 'positive'");
        *field = text(ctx, *f, fmt::format("signs.kind_from_sign.{}", name));
      }
      r.from = ascii_lower(r.from);
      r.sets = ascii_lower(r.sets);
      m.sign_rule = r;
    }
  }

  if (const auto* n = root.get("actions")) {
    m.actions = action_rules(ctx, *n);
    if (m.sign_rule && m.sign_rule->sets == "kind")
      ctx.fail(*n, "actions", "the kind comes either from [actions] or from signs.kind_from_sign");
  }

  if (const auto* n = root.get("defaults"))
    for (const auto& [k, v] : table(ctx, *n, "defaults"))
      m.defaults[ascii_lower(k.str())] = text(ctx, v, fmt::format("defaults.{}", k.str()));
  return m;
}

}  // namespace keel::io
