#include "rules/plan.h"

#include <fmt/format.h>
#include <fmt/ranges.h>
#include <toml++/toml.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include "core/error.h"
#include "core/files.h"
#include "core/text.h"
#include "rules/tax_keys.h"

namespace keel::rules {

void Plan::fail(PlanPlace at, std::string_view key, std::string_view why) const {
  throw InputError(fmt::format("{}:{}:{}: key '{}': {}", printable(source), at.line, at.column,
                               printable(key), why));
}

namespace {

PlanPlace place(const toml::node& n) {
  return {n.source().begin.line, n.source().begin.column};
}

class PlanReader {
 public:
  explicit PlanReader(Plan& plan) : plan_(plan) {}

  [[noreturn]] void fail(const toml::node& n, std::string_view key, std::string_view why) const {
    plan_.fail(place(n), key, why);
  }

  void only(const toml::table& t, std::string_view table,
            const std::vector<std::string>& allowed) const {
    for (const auto& [k, v] : t) {
      const std::string name(k.str());
      if (std::find(allowed.begin(), allowed.end(), name) != allowed.end()) continue;
      const std::string full = table.empty() ? name : fmt::format("{}.{}", table, name);
      std::string all;
      for (const auto& a : allowed) all += (all.empty() ? "" : ", ") + a;
      if (auto near = nearest(name, allowed))
        fail(v, full, fmt::format("unknown key; did you mean '{}'?", *near));
      fail(v, full, fmt::format("unknown key; expected one of: {}", all));
    }
  }

  std::optional<std::string> text(const toml::table& t, const std::string& key,
                                  std::string_view full) const {
    const auto* n = t.get(key);
    if (!n) return std::nullopt;
    if (n->type() != toml::node_type::string) fail(*n, full, "must be a string");
    auto s = *n->value<std::string>();
    if (!valid_utf8(s)) fail(*n, full, "must be valid UTF-8");
    if (s.empty() || s.size() > 200) fail(*n, full, "must be 1 to 200 characters");
    return s;
  }

  std::vector<std::string> names(const toml::node& n, std::string_view full) const {
    const auto* a = n.as_array();
    if (!a || a->empty()) fail(n, full, "must be a list of one or more account names");
    std::vector<std::string> out;
    for (const auto& item : *a) {
      const auto s = item.value<std::string>();
      if (!s || item.type() != toml::node_type::string || s->empty() || !valid_utf8(*s))
        fail(item, full, "must be a list of account names (strings)");
      if (std::find(out.begin(), out.end(), *s) != out.end())
        fail(item, full, fmt::format("'{}' is listed twice", printable(*s)));
      out.push_back(*s);
    }
    return out;
  }

  // A number exactly as written (TOML integer or float); `what` names the kind.
  Decimal number(const toml::node& n, std::string_view full, std::string_view what) const {
    if (n.is_integer()) return Decimal(*n.value<std::int64_t>());
    if (n.is_floating_point() && std::isfinite(*n.value<double>())) {
      const auto text = fmt::format("{}", *n.value<double>());  // shortest text that reads back
      if (const auto v = Decimal::try_parse(text)) return *v;
      fail(n, full, fmt::format("{} is out of range for an exact decimal", text));
    }
    fail(n, full, fmt::format("must be {}", what));
  }

  // A tax key's value, read as a rule file reads it (rules/tax_keys.h).
  TaxFail tax_fail(std::string_view full) const {
    return [this, full = std::string(full)](const toml::node& n, std::string_view why) {
      fail(n, full, why);
    };
  }

  // A percentage above 0 and at most 100, exactly as written.
  Decimal percent(const toml::node& n, std::string_view full) const {
    const Decimal v = number(n, full, "a number (percent)");
    if (!v.is_positive() || v > Decimal(100))
      fail(n, full, fmt::format("{} is out of range; must be above 0 and at most 100", v.str()));
    return v;
  }

 private:
  Plan& plan_;
};

std::string percent_text(const Decimal& fraction) {
  return (fraction * Decimal(100)).str() + "%";
}

}  // namespace

Plan load_plan(const std::filesystem::path& path) {
  if (is_standard_input(path))
    return parse_plan(standard_input_text(), input_name(path), std::filesystem::current_path());
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(fmt::format("{}: cannot open plan file", printable(path.string())));
  std::ostringstream ss;
  ss << in.rdbuf();
  return parse_plan(ss.str(), path.string(), path.parent_path());
}

Plan parse_plan(std::string_view toml_text, std::string source,
                const std::filesystem::path& folder) {
  Plan plan;
  plan.source = std::move(source);
  plan.text = std::string(toml_text);
  toml::table root;
  try {
    root = toml::parse(toml_text, plan.source);
  } catch (const toml::parse_error& e) {
    throw InputError(fmt::format("{}:{}:{}: not valid TOML: {}", printable(plan.source),
                                 e.source().begin.line, e.source().begin.column,
                                 printable(e.description())));
  }
  const PlanReader r(plan);
  r.only(root, "", {"name", "tax", "pools", "part"});
  plan.name = std::filesystem::path(plan.source).stem().string();
  if (auto s = r.text(root, "name", "name")) plan.name = *s;

  if (const auto* n = root.get("tax")) {
    const auto* t = n->as_table();
    if (!t) r.fail(*n, "tax", "must be a table ([tax])");
    r.only(*t, "tax", {"sell_from", "gain_cap"});
    if (const auto* v = t->get("sell_from"))
      plan.tax.sell_deferred_first = read_deferred_first(*v, r.tax_fail("tax.sell_from"));
    if (const auto* v = t->get("gain_cap"))
      plan.tax.gain_cap = read_gain_cap(*v, r.tax_fail("tax.gain_cap"));
  }

  std::map<std::string, std::size_t> pool_index;
  std::map<std::string, std::string> account_pool;  // account -> pool or part that holds it
  auto take_accounts = [&](const toml::node& at, std::string_view key,
                           const std::vector<std::string>& accounts, const std::string& owner) {
    for (const auto& a : accounts) {
      const auto [it, fresh] = account_pool.emplace(a, owner);
      if (!fresh)
        r.fail(at, key,
               fmt::format("account '{}' is already managed by {}; an account belongs to one "
                           "pool or part only",
                           printable(a), printable(it->second)));
    }
  };

  if (const auto* n = root.get("pools")) {
    const auto* t = n->as_table();
    if (!t) r.fail(*n, "pools", "must be a table of pools ([pools.NAME])");
    for (const auto& [k, v] : *t) {
      const std::string name(k.str());
      const std::string key = "pools." + name;
      const auto* pt = v.as_table();
      if (!pt) r.fail(v, key, "must be a table ([pools.NAME] with accounts = [...])");
      r.only(*pt, key, {"accounts", "unmanaged"});
      PlanPool pool;
      pool.name = name;
      pool.at = place(v);
      const auto* acc = pt->get("accounts");
      if (!acc) r.fail(v, key + ".accounts", "required: the accounts the pool's parts share");
      pool.accounts = r.names(*acc, key + ".accounts");
      pool.accounts_at = place(*acc);
      take_accounts(*acc, key + ".accounts", pool.accounts, "pool '" + name + "'");
      if (const auto* u = pt->get("unmanaged")) {
        const auto s = u->value<std::string>();
        if (!s || u->type() != toml::node_type::string || (*s != "keep" && *s != "sell"))
          r.fail(*u, key + ".unmanaged", "must be \"keep\" or \"sell\"");
        pool.sell_unmanaged = *s == "sell";
      }
      pool_index[name] = plan.pools.size();
      plan.pools.push_back(std::move(pool));
    }
  }

  const auto* parts = root.get("part");
  if (!parts) plan.fail({1, 1}, "part", "required: at least one [[part]] table");
  const auto* arr = parts->as_array();
  if (!arr || !arr->is_array_of_tables() || arr->empty())
    r.fail(*parts, "part", "must be written as [[part]] tables");

  std::set<std::string> part_names;
  // The last share_pct given in each pool, where a wrong total is reported.
  std::map<std::size_t, const toml::node*> last_share;
  for (const auto& item : *arr) {
    const auto& t = *item.as_table();
    r.only(t, "part", {"name", "rule", "fixed", "pool", "share_pct", "accounts", "place"});
    PlanPart part;
    part.at = place(item);
    const auto rule_path = r.text(t, "rule", "part.rule");
    const auto* fixed = t.get("fixed");
    if (rule_path && fixed)
      r.fail(*fixed, "part.fixed",
             "a part is either a rule file (rule) or a fixed sleeve, not both");
    if (!rule_path && !fixed)
      r.fail(item, "part", "needs a rule file (rule = \"FILE\") or a fixed sleeve (fixed = {...})");
    if (rule_path) {
      part.rule = load_rule(folder / *rule_path);
      part.name = part.rule->name;
    }
    if (fixed) {
      part.fixed_at = place(*fixed);
      const auto* ft = fixed->as_table();
      if (!ft || ft->empty())
        r.fail(*fixed, "part.fixed", "must be a table of symbols and weights in percent");
      Decimal total;
      for (const auto& [k, v] : *ft) {
        const std::string sym(k.str());
        const Decimal w = r.percent(v, "part.fixed." + sym);
        total += w;
        part.fixed.push_back(Sleeve{sym, Decimal::divide(w, Decimal(100), 12)});
      }
      if (total != Decimal(100))
        r.fail(*fixed, "part.fixed", fmt::format("the weights sum to {}%, not 100%", total.str()));
    }
    if (const auto* v = t.get("place"))
      part.place_deferred = read_deferred_first(*v, r.tax_fail("part.place"));
    if (auto s = r.text(t, "name", "part.name"))
      part.name = *s;
    else if (!rule_path)
      r.fail(item, "part.name", "required for a fixed sleeve: the part's name");
    if (!part_names.insert(part.name).second)
      r.fail(t.get("name") ? *t.get("name") : item, "part.name",
             fmt::format("two parts are named '{}'; give each a name of its own",
                         printable(part.name)));

    const auto* pool_node = t.get("pool");
    const auto* share_node = t.get("share_pct");
    const auto* accounts_node = t.get("accounts");
    if (pool_node) {
      if (accounts_node)
        r.fail(*accounts_node, "part.accounts",
               "a part shares a pool or keeps accounts of its own, not both");
      const auto pool_name = r.text(t, "pool", "part.pool");
      const auto it = pool_index.find(*pool_name);
      if (it == pool_index.end()) {
        std::vector<std::string> known;
        for (const auto& p : plan.pools) known.push_back(p.name);
        const auto near = nearest(*pool_name, known);
        r.fail(*pool_node, "part.pool",
               fmt::format("no pool named '{}'{}", printable(*pool_name),
                           near            ? fmt::format("; did you mean '{}'?", *near)
                           : known.empty() ? " (define it as [pools.NAME] with accounts = [...])"
                                           : " (pools: " + printable_list(known) + ")"));
      }
      if (!share_node)
        r.fail(item, "part.share_pct", "required with pool: the part's share of the pool");
      part.pool = it->second;
      part.share = Decimal::divide(r.percent(*share_node, "part.share_pct"), Decimal(100), 12);
      last_share[part.pool] = share_node;
    } else {
      if (share_node)
        r.fail(*share_node, "part.share_pct",
               "applies only with pool; a part with accounts of its own manages all of them");
      PlanPool own;
      own.name = part.name;
      own.own = true;
      own.at = part.at;
      own.accounts_at = accounts_node ? place(*accounts_node) : part.at;
      if (accounts_node) {
        own.accounts = r.names(*accounts_node, "part.accounts");
        take_accounts(*accounts_node, "part.accounts", own.accounts, "part '" + part.name + "'");
      } else if (part.rule) {
        own.accounts = part.rule->accounts;
        take_accounts(item, "part.accounts", own.accounts, "part '" + part.name + "'");
      } else {
        r.fail(item, "part.accounts", "a fixed sleeve needs a pool or accounts of its own");
      }
      part.pool = plan.pools.size();
      own.from_rule = !accounts_node;
      plan.pools.push_back(std::move(own));
    }
    plan.parts.push_back(std::move(part));
  }

  for (std::size_t i = 0; i < plan.pools.size(); ++i) {
    if (plan.pools[i].own) continue;
    Decimal total;
    std::string shares;
    for (const auto& part : plan.parts)
      if (part.pool == i) {
        total += part.share;
        shares += fmt::format("{}{} {}", shares.empty() ? "" : ", ", printable(part.name),
                              percent_text(part.share));
      }
    if (shares.empty())
      plan.fail(plan.pools[i].at, "pools." + plan.pools[i].name,
                "no part uses this pool; give it parts (pool = \"NAME\") or remove it");
    if (total != Decimal(1))
      r.fail(*last_share.at(i), "part.share_pct",
             fmt::format("the shares of pool '{}' sum to {}, not 100% ({})",
                         printable(plan.pools[i].name), percent_text(total), shares));
  }
  return plan;
}

}  // namespace keel::rules
