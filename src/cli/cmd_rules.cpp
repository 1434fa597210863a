// keel propose, keel proposals: a rule's orders for a day, and saved proposals
// against what was traded since. Logic lives in src/rules/.
#include <fmt/format.h>

#include <charconv>
#include <cmath>
#include <memory>
#include <nlohmann/json.hpp>

#include "cli/context.h"
#include "cli/options.h"
#include "cli/print.h"
#include "core/error.h"
#include "core/text.h"
#include "io/json.h"
#include "ledger/tax.h"
#include "report/table.h"
#include "rules/propose.h"
#include "rules/repurchase.h"

namespace keel::cli {
namespace {

using Json = nlohmann::ordered_json;
using report::Align;
using report::Table;

std::string pct(const Decimal& fraction) {
  return (fraction * Decimal(100)).fixed(2) + "%";
}
std::string z_text(const std::optional<double>& z) {
  if (!z) return "";
  return fmt::format("{:.2f}", std::fabs(*z) < 0.005 ? 0.0 : *z);
}

struct ProposeOptions {
  std::string rule, as_of;
  bool json = false;
  bool save = false;
  int repurchase_window = 0;
};

// A proposal's JSON is written directly: a screen of thousands of names
// would otherwise spend most of the command's time building a document tree.
// Strings are escaped as RFC 8259 section 7 asks; decimals go out as strings.
class JsonText {
 public:
  static std::string q(std::string_view v) {
    // Text stored from outside keel may not be UTF-8; JSON must be (as io::dump_json).
    if (!valid_utf8(v)) return q(to_valid_utf8(v));
    bool plain = true;
    for (const char c : v) plain &= c != '"' && c != '\\' && static_cast<unsigned char>(c) >= 0x20;
    if (plain) {
      std::string out;
      out.reserve(v.size() + 2);
      return out.append(1, '"').append(v).append(1, '"');
    }
    std::string out = "\"";
    for (const char c : v) {
      switch (c) {
        case '"':
          out += "\\\"";
          break;
        case '\\':
          out += "\\\\";
          break;
        case '\n':
          out += "\\n";
          break;
        case '\t':
          out += "\\t";
          break;
        case '\r':
          out += "\\r";
          break;
        default:
          if (static_cast<unsigned char>(c) < 0x20)
            out += fmt::format("\\u{:04x}", static_cast<unsigned char>(c));
          else
            out += c;
      }
    }
    return out + "\"";
  }
  static std::string q(const Decimal& d) { return q(d.str()); }
  static std::string number(double x) {
    return std::isfinite(x) ? fmt::format("{}", x) : std::string("null");
  }
  static std::string boolean(bool b) { return b ? "true" : "false"; }
  // {"k": v, ...} from already rendered values.
  static std::string object(std::initializer_list<std::pair<std::string_view, std::string>> kv) {
    std::string out = "{";
    bool first = true;
    for (const auto& [k, v] : kv) {
      out += first ? "" : ", ";
      first = false;
      out += q(k) + ": " + v;
    }
    return out + "}";
  }
  static std::string array(const std::vector<std::string>& items, bool one_per_line) {
    if (items.empty()) return "[]";
    std::string out = "[";
    for (std::size_t i = 0; i < items.size(); ++i) {
      out += i ? "," : "";
      out += one_per_line ? "\n    " : (i ? " " : "");
      out += items[i];
    }
    return out + (one_per_line ? "\n  ]" : "]");
  }
  static std::string strings(const std::vector<std::string>& items, bool one_per_line) {
    std::vector<std::string> quoted;
    for (const auto& s : items) quoted.push_back(q(s));
    return array(quoted, one_per_line);
  }
};

std::string proposal_json(const rules::Proposal& p, std::optional<std::int64_t> saved_id) {
  using J = JsonText;
  const std::string null = "null";
  std::vector<std::string> screen;
  screen.reserve(p.screen.lines.size());
  for (const auto& l : p.screen.lines)
    screen.push_back(J::object({{"symbol", J::q(l.symbol)},
                                {"value", l.figure ? J::q(l.figure->value) : null},
                                {"period", l.figure ? J::q(l.figure->period.str()) : null},
                                {"known_on", l.figure ? J::q(l.figure->known_on.str()) : null},
                                {"age_days", l.figure ? std::to_string(l.age_days) : null},
                                {"z", l.z ? J::number(*l.z) : null},
                                {"held", J::boolean(l.held)},
                                {"selected", J::boolean(l.selected)},
                                {"excluded_reason", l.passed ? null : J::q(l.excluded_reason)},
                                {"note", J::q(l.note)}}));
  std::vector<std::string> orders;
  for (const auto& o : p.plan.orders) {
    std::vector<std::string> lots;
    for (const auto& l : o.lots)
      lots.push_back(J::object({{"lot", std::to_string(l.lot_id)},
                                {"acquired", J::q(l.acquired.str())},
                                {"quantity", J::q(l.quantity)},
                                {"cost", J::q(l.cost)},
                                {"est_gain", J::q(l.est_gain)},
                                {"term", J::q(l.long_term ? "long" : "short")}}));
    orders.push_back(J::object({{"account", J::q(o.account)},
                                {"symbol", J::q(o.symbol)},
                                {"side", J::q(rules::to_string(o.side))},
                                {"quantity", J::q(o.quantity)},
                                {"price", J::q(o.price)},
                                {"value", J::q(o.value)},
                                {"fee", J::q(o.fee)},
                                {"weight_now", J::q(o.weight_now)},
                                {"weight_target", J::q(o.weight_target)},
                                {"reason", J::q(o.reason)},
                                {"lots", J::array(lots, false)}}));
  }
  std::vector<std::string> after, cash, skipped;
  for (const auto& w : p.plan.weights_after)
    after.push_back(J::object({{"symbol", J::q(w.symbol)},
                               {"value", J::q(w.value)},
                               {"weight", J::q(w.weight)},
                               {"target", J::q(w.target)}}));
  for (const auto& c : p.plan.cash_after)
    cash.push_back(J::object(
        {{"account", J::q(c.account)}, {"cash", J::q(c.cash)}, {"reserve", J::q(c.reserve)}}));
  for (const auto& k : p.plan.skipped)
    skipped.push_back(J::object({{"symbol", J::q(k.symbol)}, {"why", J::q(k.why)}}));
  std::string s = "{\n";
  auto field = [&](std::string_view key, const std::string& value, bool last = false) {
    s += "  " + J::q(key) + ": " + value + (last ? "\n" : ",\n");
  };
  field("as_of", J::q(p.as_of.str()));
  field("rule", J::q(p.rule_name));
  field("rule_sha256", J::q(p.rule_sha256));
  field("accounts", J::strings(p.accounts, false));
  field("pool_value", J::q(p.plan.pool_value));
  field("screen", J::array(screen, true));
  field("orders", J::array(orders, true));
  field("weights_after", J::array(after, true));
  field("cash_after", J::q(p.plan.cash_after_total));
  field("cash_after_by_account", J::array(cash, true));
  field("turnover", J::q(p.plan.turnover));
  field("estimated_fees", J::q(p.plan.estimated_fees));
  field("skipped", J::array(skipped, true));
  field("notes", J::strings(p.notes, true));
  field("cautions", J::strings(p.cautions, true), !saved_id);
  if (saved_id) field("proposal_id", std::to_string(*saved_id), true);
  return s + "}\n";
}

std::string proposal_text(const rules::Proposal& p, bool colour) {
  std::string s =
      fmt::format("Proposal of rule '{}' as of {}\n", printable(p.rule_name), p.as_of.str());
  std::string accounts;
  for (const auto& a : p.accounts) accounts += (accounts.empty() ? "" : ", ") + printable(a);
  s += fmt::format("Accounts: {}; pool value {}\n\n", accounts, money(p.plan.pool_value));

  const auto& sc = p.screen;
  s += fmt::format("1. Screen: {} of {} names pass; mean {:.6g}, sd {:.6g}", sc.passed,
                   sc.lines.size(), sc.mean, sc.sd);
  if (sc.clip_low)
    s += fmt::format("; values clipped to [{:.6g}, {:.6g}]", *sc.clip_low, *sc.clip_high);
  s += fmt::format("; {} selected\n", sc.selected);
  Table screen({{"symbol"},
                {"value", Align::right},
                {"period"},
                {"age", Align::right},
                {"known on"},
                {"z", Align::right},
                {"held"},
                {"in/out"},
                {"why"}});
  for (const auto& l : sc.lines)
    screen.add_row(
        {l.symbol, l.figure ? l.figure->value.str() : "", l.figure ? l.figure->period.str() : "",
         l.figure ? std::to_string(l.age_days) : "", l.figure ? l.figure->known_on.str() : "",
         z_text(l.z), l.held ? "yes" : "", l.selected ? "in" : "out", l.note});
  s += screen.render({colour}) + "\n";

  s += "2. Orders (estimates at the closes used)\n";
  if (p.plan.orders.empty()) {
    s += "No orders.\n\n";
  } else {
    Table t({{"account"},
             {"symbol"},
             {"side"},
             {"quantity", Align::right},
             {"est. price", Align::right},
             {"est. value", Align::right},
             {"est. fee", Align::right},
             {"now", Align::right},
             {"target", Align::right},
             {"reason"}});
    for (const auto& o : p.plan.orders) {
      t.add_row({o.account, o.symbol, std::string(rules::to_string(o.side)), o.quantity.str(),
                 o.price.str(), money(o.value), money(o.fee), pct(o.weight_now),
                 pct(o.weight_target), o.reason});
      for (const auto& l : o.lots)
        t.add_row({"", "", "", l.quantity.str(), "", "", "", "", "",
                   fmt::format("  lot {} acquired {}: cost {}, est. gain {} ({}-term)", l.lot_id,
                               l.acquired.str(), money(l.cost), money(l.est_gain),
                               l.long_term ? "long" : "short")});
    }
    s += t.render({colour}) + "\n";
  }

  s += "3. Result\n";
  Table w({{"symbol"},
           {"value after", Align::right},
           {"weight", Align::right},
           {"target", Align::right}});
  for (const auto& x : p.plan.weights_after)
    w.add_row({x.symbol, money(x.value), pct(x.weight), pct(x.target)});
  for (const auto& c : p.plan.cash_after)
    w.add_row({"(cash) " + c.account, money(c.cash), "",
               c.reserve.is_zero() ? "" : "reserve " + money(c.reserve)});
  s += w.render({colour});
  s += fmt::format("Cash after: {}; turnover {}; estimated fees {}\n",
                   money(p.plan.cash_after_total), pct(p.plan.turnover),
                   money(p.plan.estimated_fees));
  if (!p.plan.skipped.empty()) {
    s += "Not traded:\n";
    for (const auto& k : p.plan.skipped)
      s += fmt::format("  {}: {}\n", printable(k.symbol), printable(k.why));
  }
  for (const auto& n : p.notes) s += fmt::format("Note: {}\n", printable(n));
  s += "\nCautions:\n";
  for (const auto& c : p.cautions) s += "  - " + c + "\n";
  return s;
}

void add_propose(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ProposeOptions>();
  auto* cmd = app.add_subcommand(
      "propose", "A rule's orders for a day: the screen, the orders and the result");
  add_examples(*cmd, {"keel propose --rule rule.toml --as-of 2025-12-31",
                      "keel propose --rule rule.toml --save"});
  cmd->add_option("--rule", o->rule, "Rule file (TOML; see docs/rules.md)")->required();
  cmd->add_option("--as-of", o->as_of,
                  "Day to propose for, YYYY-MM-DD (default: the latest day with a close)");
  add_json_flag(*cmd, o->json);
  cmd->add_flag("--save", o->save, "Keep the proposal, to compare with what is traded later");
  auto* window =
      cmd->add_option("--repurchase-window", o->repurchase_window,
                      "Flag each sell at an estimated loss when the security was bought, in any "
                      "account, this many days before, or is bought by the proposal (off unless "
                      "given)");
  cmd->callback([&ctx, o, window] {
    const auto as_of = date_option(o->as_of, "--as-of");
    if (window->count() > 0) ledger::check_repurchase_window(o->repurchase_window);
    const auto rule = rules::load_rule(o->rule);
    auto db = ctx.open_ledger(o->save ? store::Access::write : store::Access::read);
    auto proposal = rules::propose(db, rule, as_of);
    if (window->count() > 0) rules::flag_repurchases(db, proposal, o->repurchase_window);
    std::optional<std::int64_t> id;
    if (o->save) id = rules::save(db, rule, proposal);
    if (o->json) {
      out(proposal_json(proposal, id));
      return;
    }
    out(proposal_text(proposal, ctx.colour()));
    if (id) out(fmt::format("\nSaved as proposal {}; see 'keel proposals show {}'.\n", *id, *id));
  });
}

struct ProposalsOptions {
  std::string id;
  bool json = false;
};

std::int64_t id_option(const std::string& text) {
  std::int64_t id = 0;
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), id);
  if (ec != std::errc() || end != text.data() + text.size() || id < 1)
    throw InputError(fmt::format("ID: '{}' is not a proposal number", printable(text)));
  return id;
}

void add_proposals(CLI::App& app, Context& ctx) {
  auto* group = app.add_subcommand("proposals", "Saved proposals");
  add_examples(*group, {"keel proposals list", "keel proposals show 1"});
  group->require_subcommand(1);

  auto lo = std::make_shared<ProposalsOptions>();
  auto* list = group->add_subcommand("list", "Every saved proposal, oldest first");
  add_examples(*list, {"keel proposals list", "keel proposals list --json"});
  add_json_flag(*list, lo->json);
  list->callback([&ctx, lo] {
    auto db = ctx.open_ledger();
    const auto all = store::list_proposals(db);
    if (lo->json) {
      Json j = Json::array();
      for (const auto& p : all)
        j.push_back({{"id", p.id},
                     {"as_of", p.as_of.str()},
                     {"rule", p.rule_name},
                     {"rule_file", p.rule_file},
                     {"rule_sha256", p.rule_sha256},
                     {"pool_value", p.pool_value.str()},
                     {"orders", p.order_count},
                     {"saved_at", p.saved_at}});
      out(io::dump_json(j) + "\n");
      return;
    }
    Table t({{"id", Align::right},
             {"as of"},
             {"rule"},
             {"orders", Align::right},
             {"pool value", Align::right},
             {"rule sha256"},
             {"saved at"}});
    for (const auto& p : all)
      t.add_row({std::to_string(p.id), p.as_of.str(), p.rule_name, std::to_string(p.order_count),
                 money(p.pool_value), p.rule_sha256.substr(0, 12), p.saved_at});
    out(t.render({ctx.colour()}));
  });

  auto so = std::make_shared<ProposalsOptions>();
  auto* show = group->add_subcommand(
      "show", "A saved proposal's orders against the trades posted since it was saved");
  add_examples(*show, {"keel proposals show 1", "keel proposals show 1 --json"});
  show->add_option("ID", so->id, "Proposal number (see 'keel proposals list')")->required();
  add_json_flag(*show, so->json);
  show->callback([&ctx, so] {
    const std::int64_t id = id_option(so->id);
    auto db = ctx.open_ledger();
    const auto r = rules::review(db, id);
    const auto& p = r.proposal;
    if (so->json) {
      Json j;
      j["id"] = p.id;
      j["as_of"] = p.as_of.str();
      j["rule"] = p.rule_name;
      j["rule_file"] = p.rule_file;
      j["rule_sha256"] = p.rule_sha256;
      j["pool_value"] = p.pool_value.str();
      j["saved_at"] = p.saved_at;
      j["lines"] = Json::array();
      for (const auto& l : r.lines)
        j["lines"].push_back({{"account", l.account},
                              {"symbol", l.symbol},
                              {"side", l.side},
                              {"proposed", l.proposed.str()},
                              {"est_price", l.est_price.str()},
                              {"traded", l.traded.str()},
                              {"avg_price", l.avg_price ? Json(l.avg_price->str()) : Json()},
                              {"status", l.status}});
      j["cautions"] = rules::proposal_cautions(p.as_of);
      out(io::dump_json(j) + "\n");
      return;
    }
    out(fmt::format("Proposal {} of rule '{}' as of {}, saved {}\n", p.id, printable(p.rule_name),
                    p.as_of.str(), p.saved_at));
    out(fmt::format("Rule file {} (sha256 {}); pool value {}\n\n", printable(p.rule_file),
                    p.rule_sha256, money(p.pool_value)));
    Table t({{"account"},
             {"symbol"},
             {"side"},
             {"proposed", Align::right},
             {"est. price", Align::right},
             {"traded since", Align::right},
             {"avg. price", Align::right},
             {"status"}});
    for (const auto& l : r.lines)
      t.add_row({l.account, l.symbol, l.side, l.proposed.is_zero() ? "" : l.proposed.str(),
                 l.est_price.is_zero() ? "" : l.est_price.str(), l.traded.str(),
                 l.avg_price ? l.avg_price->str() : "", l.status});
    if (r.lines.empty())
      out("The proposal had no orders and nothing was traded since.\n");
    else
      out(t.render({ctx.colour()}));
    out("\nThe proposal was the output of your own rule, not advice; past results do not predict "
        "future ones.\n");
  });
}

}  // namespace

void register_rules_commands(CLI::App& app, Context& context) {
  add_propose(app, context);
  add_proposals(app, context);
}

}  // namespace keel::cli
