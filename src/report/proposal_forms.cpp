#include "report/proposal_forms.h"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "core/json.h"
#include "core/text.h"
#include "report/format.h"
#include "report/json_schema.h"
#include "report/table.h"

namespace keel::report {

namespace {

void screen_json(JsonWriter& j, const rules::ScreenResult& screen) {
  j.key("screen").begin_array();
  for (const auto& l : screen.lines) {
    j.begin_object().member("symbol", l.symbol);
    if (l.figure) {
      j.member("value", l.figure->value);
      j.member("period", l.figure->period.str());
      j.member("known_on", l.figure->known_on.str());
      j.member("age_days", l.age_days);
    } else {
      j.key("value").null().key("period").null().key("known_on").null().key("age_days").null();
    }
    j.member("z", l.z);
    if (!screen.scored_metrics.empty()) {  // several metrics, or within groups
      j.key("metric_z").begin_object();
      for (std::size_t m = 0; m < screen.scored_metrics.size(); ++m)
        j.member(screen.scored_metrics[m],
                 m < l.metric_z.size() ? l.metric_z[m] : std::optional<double>());
      j.end_object();
    }
    if (!screen.within.empty()) j.member("group", l.group);
    if (l.track)  // only a rule with a [track_record] has these
      j.member("track_correlation", l.track->correlation)
          .member("track_observations", l.track->observations);
    j.member("held", l.held).member("selected", l.selected);
    if (l.passed)
      j.key("excluded_reason").null();
    else
      j.member("excluded_reason", l.excluded_reason);
    j.member("note", l.note);
    j.end_object();
  }
  j.end_array();
}

// An order's currency side: null for a name in the pool's currency.
void order_fx_json(JsonWriter& j, const rules::Order& o) {
  if (!o.fx) {
    j.key("fx").null();
    return;
  }
  const auto& fx = *o.fx;
  j.key("fx").begin_object();
  j.member("currency", fx.quote.currency).member("local_price", fx.quote.local_price);
  if (fx.quote.rate_text.empty())
    j.key("rate").null().key("rate_source").null();
  else
    j.member("rate", fx.quote.rate).member("rate_source", fx.quote.rate_text);
  j.member("rate_derived", fx.quote.derived).member("local_value", fx.local_value);
  j.member("from_cash", fx.from_cash);
  if (fx.settles_in.empty())
    j.key("settles_in").null();
  else
    j.member("settles_in", fx.settles_in);
  j.member("local_settled", fx.local_settled).member("settled", fx.settled);
  j.end_object();
}

enum class WithFx { no, yes };

void orders_json(JsonWriter& j, const std::vector<rules::Order>& orders,
                 WithFx with_fx = WithFx::no) {
  j.key("orders").begin_array();
  for (const auto& o : orders) {
    j.begin_object();
    j.member("account", o.account).member("symbol", o.symbol);
    j.member("side", std::string(rules::to_string(o.side)));
    j.member("quantity", o.quantity).member("price", o.price).member("value", o.value);
    j.member("fee", o.fee).member("weight_now", o.weight_now);
    j.member("weight_target", o.weight_target).member("reason", o.reason);
    j.key("lots").begin_array();
    for (const auto& l : o.lots) {
      j.begin_object();
      j.member("lot", static_cast<long long>(l.lot_id)).member("acquired", l.acquired.str());
      j.member("quantity", l.quantity).member("cost", l.cost).member("est_gain", l.est_gain);
      j.member("term", l.long_term ? "long" : "short");
      j.end_object();
    }
    j.end_array();
    if (with_fx == WithFx::yes) order_fx_json(j, o);
    j.end_object();
  }
  j.end_array();
}

void result_json(JsonWriter& j, const rules::OrderPlan& plan) {
  j.key("weights_after").begin_array();
  for (const auto& w : plan.weights_after) {
    j.begin_object();
    j.member("symbol", w.symbol).member("value", w.value).member("weight", w.weight);
    j.member("target", w.target);
    j.end_object();
  }
  j.end_array();
  j.member("cash_after", plan.cash_after_total);
  j.key("cash_after_by_account").begin_array();
  for (const auto& c : plan.cash_after) {
    j.begin_object();
    j.member("account", c.account).member("cash", c.cash).member("reserve", c.reserve);
    j.end_object();
  }
  j.end_array();
  j.member("turnover", plan.turnover);
  j.member("estimated_fees", plan.estimated_fees);
  j.key("skipped").begin_array();
  for (const auto& k : plan.skipped)
    j.begin_object().member("symbol", k.symbol).member("why", k.why).end_object();
  j.end_array();
}

std::string screen_text(const rules::ScreenResult& sc, const Style& style) {
  std::string s;
  if (sc.scored_metrics.empty()) {
    s += fmt::format("{} of {} names pass; mean {:.6g}, sd {:.6g}", sc.passed, sc.lines.size(),
                     sc.mean, sc.sd);
  } else {
    s += fmt::format("{} of {} names pass", sc.passed, sc.lines.size());
    if (!sc.within.empty()) s += fmt::format("; each metric scored within its {}", sc.within);
    for (const auto& m : sc.metrics) {
      s += fmt::format("; {}: mean {:.6g}, sd {:.6g}", m.name, m.mean, m.sd);
      if (m.clip_low) s += fmt::format(", clipped to [{:.6g}, {:.6g}]", *m.clip_low, *m.clip_high);
    }
    // The score's mean is zero but for rounding; "1.9e-17" reads as a bug.
    s += fmt::format("; score: mean {:.6g}, sd {:.6g}", std::fabs(sc.mean) < 1e-9 ? 0.0 : sc.mean,
                     sc.sd);
  }
  if (sc.clip_low)
    s += fmt::format("; values clipped to [{:.6g}, {:.6g}]", *sc.clip_low, *sc.clip_high);
  s += fmt::format("; {} selected\n", sc.selected);
  // A narrow terminal shortens the why, then loses the period, the day the
  // figure was known and its age; the figure, z and the verdict stay.
  const bool track = std::any_of(sc.lines.begin(), sc.lines.end(),
                                 [](const rules::ScreenLine& l) { return l.track.has_value(); });
  std::vector<Table::Column> columns{{"symbol"},
                                     {"value", Align::right},
                                     {"period", Align::left, false, 3},
                                     {"age", Align::right, false, 1},
                                     {"known on", Align::left, false, 2},
                                     {"z", Align::right}};
  // Several metrics, or within groups: the group and each metric's z before
  // the score's.
  if (!sc.within.empty())
    columns.insert(columns.begin() + 1, Table::Column{sc.within, Align::left, true, 4});
  for (const auto& m : sc.scored_metrics)
    columns.insert(columns.end() - 1, Table::Column{"z " + m, Align::right});
  if (track) {
    // The track record: correlation of past z's with later returns, and
    // how many months it rests on.
    columns.push_back({"record", Align::right});
    columns.push_back({"months", Align::right});
  }
  for (std::string_view c : {"held", "in/out"}) columns.push_back({std::string(c)});
  columns.push_back({"why", Align::left, true});
  Table screen(std::move(columns));
  for (const auto& l : sc.lines) {
    std::vector<std::string> row{l.symbol,
                                 l.figure ? l.figure->value.str() : "",
                                 l.figure ? l.figure->period.str() : "",
                                 l.figure ? std::to_string(l.age_days) : "",
                                 l.figure ? l.figure->known_on.str() : "",
                                 z_text(l.z)};
    if (!sc.within.empty()) row.insert(row.begin() + 1, l.group ? *l.group : "");
    for (std::size_t m = 0; m < sc.scored_metrics.size(); ++m)
      row.insert(row.end() - 1,
                 z_text(m < l.metric_z.size() ? l.metric_z[m] : std::optional<double>()));
    if (track) {
      row.push_back(l.track && l.passed ? z_text(l.track->correlation) : "");
      row.push_back(l.track && l.passed ? std::to_string(l.track->observations) : "");
    }
    row.push_back(l.held ? "yes" : "");
    row.push_back(l.selected ? "in" : "out");
    row.push_back(l.note);
    screen.add_row(std::move(row));
  }
  s += screen.render(style) + "\n";

  return s;
}

// Each order's local price and rate, and how it settles, under it.
std::string fx_orders_text(const std::vector<rules::Order>& orders, const std::string& currency,
                           const Style& style) {
  // At a narrow terminal the weights now and the fee make way first, then
  // the rate (the lines under the table name each rate used).
  Table t({{"account", Align::left, true},
           {"symbol"},
           {"side"},
           {"quantity", Align::right},
           {"local price", Align::right},
           {"rate", Align::right, false, 1},
           {"est. value " + currency, Align::right},
           {"est. fee", Align::right, false, 2},
           {"now", Align::right, false, 3},
           {"target", Align::right},
           {"reason", Align::left, true}});
  bool derived = false;
  for (const auto& o : orders) {
    std::string local = o.price.str() + " " + currency, rate;
    if (o.fx) {
      local = o.fx->quote.local_price.str() + " " + o.fx->quote.currency;
      if (!o.fx->quote.rate_text.empty())
        rate = o.fx->quote.rate.str() + (o.fx->quote.derived ? "*" : "");
      derived = derived || o.fx->quote.derived;
    }
    t.add_row({o.account, o.symbol, std::string(rules::to_string(o.side)), o.quantity.str(), local,
               rate, money(o.value), money(o.fee), pct(o.weight_now), pct(o.weight_target),
               o.reason});
    if (o.fx) {
      const auto& fx = *o.fx;
      std::string how;
      if (o.side == rules::Side::sell)
        how = fmt::format("proceeds {} {} kept in {}", fx.local_value.str(), fx.quote.currency,
                          fx.quote.currency);
      else if (fx.settles_in.empty())
        how = fmt::format("paid from {} cash", fx.quote.currency);
      else
        how = fmt::format("{}settles in {}: {} {} for about {} {}",
                          fx.from_cash.is_zero()
                              ? ""
                              : fmt::format("{} {} from {} cash; ", fx.from_cash.str(),
                                            fx.quote.currency, fx.quote.currency),
                          fx.settles_in, fx.local_settled.str(), fx.quote.currency,
                          fx.settled.str(), fx.settles_in);
      t.add_row({"", "", "", "", "", "", "", "", "", "", "  " + how});
    }
    for (const auto& l : o.lots)
      t.add_row({"", "", "", l.quantity.str(), "", "", "", "", "", "",
                 fmt::format("  lot {} acquired {}: cost {}, est. gain {} ({}-term)", l.lot_id,
                             l.acquired.str(), money(l.cost), money(l.est_gain),
                             l.long_term ? "long" : "short")});
  }
  std::string s = t.render(style);
  // Each rate once, in the order first used.
  std::vector<std::string> rates;
  for (const auto& o : orders)
    if (o.fx && !o.fx->quote.rate_text.empty() &&
        std::find(rates.begin(), rates.end(), o.fx->quote.rate_text) == rates.end())
      rates.push_back(o.fx->quote.rate_text);
  for (const auto& r : rates) s += "rate " + r + "\n";
  if (derived) s += "* derived from the stored rates, not stored itself\n";
  s += '\n';
  return s;
}

std::string orders_text(const std::vector<rules::Order>& orders, const Style& style,
                        const std::string& currency) {
  std::string s;
  if (orders.empty()) {
    s += "No orders.\n\n";
  } else if (std::any_of(orders.begin(), orders.end(),
                         [](const rules::Order& o) { return o.fx.has_value(); })) {
    s += fx_orders_text(orders, currency, style);
  } else {
    // The reason (and the account) shorten first; then the weights now and
    // the fee make way, never the order itself.
    Table t({{"account", Align::left, true},
             {"symbol"},
             {"side"},
             {"quantity", Align::right},
             {"est. price", Align::right},
             {"est. value", Align::right},
             {"est. fee", Align::right, false, 1},
             {"now", Align::right, false, 2},
             {"target", Align::right},
             {"reason", Align::left, true}});
    for (const auto& o : orders) {
      t.add_row({o.account, o.symbol, std::string(rules::to_string(o.side)), o.quantity.str(),
                 o.price.str(), money(o.value), money(o.fee), pct(o.weight_now),
                 pct(o.weight_target), o.reason});
      for (const auto& l : o.lots)
        t.add_row({"", "", "", l.quantity.str(), "", "", "", "", "",
                   fmt::format("  lot {} acquired {}: cost {}, est. gain {} ({}-term)", l.lot_id,
                               l.acquired.str(), money(l.cost), money(l.est_gain),
                               l.long_term ? "long" : "short")});
    }
    s += t.render(style) + "\n";
  }

  return s;
}

// Planned cash, one line each: never booked by a proposal. An amount in
// another currency than the proposal's shows what it comes to there.
std::string planned_text(const std::vector<rules::PlannedCash>& planned) {
  std::string s;
  for (const auto& c : planned) {
    s += fmt::format("Planned, not booked: {} {}{} {} {}",
                     c.amount.is_negative() ? "withdraw" : "deposit", money(c.amount.abs()),
                     c.converted ? " " + c.currency : "", c.amount.is_negative() ? "from" : "to",
                     printable(c.account));
    if (c.converted) s += fmt::format(" (about {} {})", money(c.converted->abs()), c.into);
    s += "\n";
  }
  return s;
}

void planned_json(JsonWriter& j, const std::vector<rules::PlannedCash>& planned) {
  j.key("planned_cash").begin_array();
  for (const auto& c : planned) {
    j.begin_object().member("account", c.account).member("amount", c.amount);
    j.member("currency", c.currency);
    if (c.converted)
      j.member("converted", *c.converted);
    else
      j.key("converted").null();
    j.member("booked", false).end_object();
  }
  j.end_array();
}

void conversions_json(JsonWriter& j, const std::vector<rules::Conversion>& conversions) {
  j.key("conversions").begin_array();
  for (const auto& c : conversions) {
    j.begin_object().member("account", c.account).member("from", c.from).member("to", c.to);
    j.member("amount", c.amount).member("about", c.about).member("rate_source", c.rate_text);
    j.member("fee", c.fee).end_object();
  }
  j.end_array();
}

std::string conversions_text(const std::vector<rules::Conversion>& conversions,
                             const std::string& currency) {
  if (conversions.empty()) return "";
  std::string s = "Currency conversions the orders need (estimates)\n";
  for (const auto& c : conversions)
    s += fmt::format("  {}: about {} {} into {} {} at {}; est. fee {} {}\n", printable(c.account),
                     c.about.str(), c.from, c.amount.str(), c.to, c.rate_text, money(c.fee),
                     currency);
  s += '\n';
  return s;
}

// "value 10040.00 EUR (other currencies converted ...)" or "value 10040.00".
std::string pool_value_text(const Decimal& value, bool converted, const std::string& currency,
                            Date as_of) {
  if (!converted) return money(value);
  return fmt::format("{} {} (other currencies converted at the latest rates on or before {})",
                     money(value), currency, as_of.str());
}

std::string result_text(const rules::OrderPlan& plan, const Style& style) {
  std::string s;
  Table w({{"symbol"},
           {"value after", Align::right},
           {"weight", Align::right},
           {"target", Align::right}});
  for (const auto& x : plan.weights_after)
    w.add_row({x.symbol, money(x.value), pct(x.weight), pct(x.target)});
  for (const auto& c : plan.cash_after)
    w.add_row({"(cash) " + c.account, money(c.cash), "",
               c.reserve.is_zero() ? "" : "reserve " + money(c.reserve)});
  s += w.render(style);
  s += fmt::format("Cash after: {}; turnover {}; estimated fees {}\n", money(plan.cash_after_total),
                   pct(plan.turnover), money(plan.estimated_fees));
  if (!plan.skipped.empty()) {
    s += "Not traded:\n";
    for (const auto& k : plan.skipped)
      s += fmt::format("  {}: {}\n", printable(k.symbol), printable(k.why));
  }
  return s;
}

}  // namespace

std::string proposal_json(const rules::Proposal& p, std::optional<std::int64_t> saved_id) {
  std::string s;
  // About what a screened name (~280 bytes) and an order with its weight
  // (~500) take: one allocation instead of a copy at each doubling.
  s.reserve(4096 + 320 * p.screen.lines.size() + 700 * p.plan.orders.size());
  JsonWriter j(s);
  begin_document(j, "propose", 5);
  j.member("as_of", p.as_of.str());
  j.member("rule", p.rule_name);
  j.member("rule_sha256", p.rule_sha256);
  j.member("accounts", p.accounts);
  j.member("currency", p.currency);
  planned_json(j, p.planned);
  j.member("pool_value", p.plan.pool_value);
  screen_json(j, p.screen);
  orders_json(j, p.plan.orders, WithFx::yes);
  conversions_json(j, p.conversions);
  result_json(j, p.plan);
  j.member("notes", p.notes);
  j.member("cautions", p.cautions);
  if (saved_id) j.member("proposal_id", static_cast<long long>(*saved_id));
  j.end_object();
  s += '\n';
  return s;
}

std::string proposal_text(const rules::Proposal& p, const Style& style) {
  std::string s =
      fmt::format("Proposal of rule '{}' as of {}\n", printable(p.rule_name), p.as_of.str());
  s += fmt::format("Accounts: {}; pool value {}\n", printable_list(p.accounts),
                   pool_value_text(p.plan.pool_value, p.converted, p.currency, p.as_of));
  s += planned_text(p.planned) + "\n";

  s += "1. Screen: " + screen_text(p.screen, style);
  s += "2. Orders (estimates at the closes used)\n" + orders_text(p.plan.orders, style, p.currency);
  s += conversions_text(p.conversions, p.currency);
  s += "3. Result\n" + result_text(p.plan, style);
  for (const auto& n : p.notes) s += fmt::format("Note: {}\n", printable(n));
  s += "\nCautions:\n";
  for (const auto& c : p.cautions) s += "  - " + c + "\n";
  return s;
}

std::string plan_proposal_json(const rules::PlanProposal& p, std::optional<std::int64_t> saved_id) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "plan-proposal", 4);
  j.member("as_of", p.as_of.str()).member("plan", p.plan_name);
  planned_json(j, p.planned);
  j.key("parts").begin_array();
  for (const auto& part : p.parts) {
    j.begin_object().member("name", part.name);
    if (part.rule.empty())
      j.member("kind", "fixed").key("rule").null().key("rule_file").null();
    else
      j.member("kind", "rule").member("rule", part.rule).member("rule_file", part.rule_file);
    j.member("pool", part.pool).member("share", part.share);
    if (part.screen)
      screen_json(j, *part.screen);
    else
      j.key("screen").null();
    j.key("targets").begin_array();
    for (const auto& t : part.targets)
      j.begin_object()
          .member("symbol", t.symbol)
          .member("weight", t.weight)
          .member("why", t.why)
          .end_object();
    j.end_array();
    orders_json(j, part.orders, WithFx::yes);
    j.end_object();
  }
  j.end_array();
  j.key("pools").begin_array();
  for (const auto& pool : p.pools) {
    j.begin_object().member("name", pool.name).member("accounts", pool.accounts);
    if (pool.trading_from.empty())
      j.key("trading_from").null();
    else
      j.member("trading_from", pool.trading_from);
    j.member("currency", pool.currency).member("pool_value", pool.plan.pool_value);
    orders_json(j, pool.plan.orders, WithFx::yes);
    conversions_json(j, pool.conversions);
    result_json(j, pool.plan);
    j.end_object();
  }
  j.end_array();
  j.key("unmanaged").begin_array();
  for (const auto& u : p.unmanaged) {
    j.begin_object().member("pool", u.pool).member("account", u.account).member("symbol", u.symbol);
    j.member("quantity", u.quantity).member("price", u.price).member("value", u.value);
    j.member("action", u.sold ? "sell" : "keep").end_object();
  }
  j.end_array();
  j.member("notes", p.notes).member("cautions", p.cautions);
  if (saved_id) j.member("proposal_id", static_cast<long long>(*saved_id));
  j.end_object();
  s += '\n';
  return s;
}

std::string plan_proposal_text(const rules::PlanProposal& p, const Style& style) {
  std::string s = fmt::format("Plan '{}' as of {}\n", printable(p.plan_name), p.as_of.str());
  s += planned_text(p.planned) + "\n";
  for (const auto& part : p.parts) {
    s += fmt::format("Part '{}': {}, {} of pool '{}'\n", printable(part.name),
                     part.rule.empty() ? std::string("fixed sleeve")
                                       : fmt::format("rule '{}'", printable(part.rule)),
                     pct(part.share), printable(part.pool));
    if (part.screen) s += "Screen: " + screen_text(*part.screen, style);
    Table t({{"symbol"}, {"target", Align::right}, {"why", Align::left, true}});
    for (const auto& x : part.targets) t.add_row({x.symbol, pct(x.weight), x.why});
    s += "Targets (of the pool's invested value)\n" + t.render(style);
    const auto pool = std::find_if(p.pools.begin(), p.pools.end(),
                                   [&](const rules::PoolResult& x) { return x.name == part.pool; });
    s += "Orders\n" + orders_text(part.orders, style, pool->currency);
  }
  for (const auto& pool : p.pools) {
    s += fmt::format("Pool '{}': {}; value {}; trading settings {}\n", printable(pool.name),
                     printable_list(pool.accounts),
                     pool_value_text(pool.plan.pool_value, pool.converted, pool.currency, p.as_of),
                     pool.trading_from.empty()
                         ? std::string("the defaults")
                         : fmt::format("of part '{}'", printable(pool.trading_from)));
    s += "All orders, one per account and security (estimates at the closes used)\n" +
         orders_text(pool.plan.orders, style, pool.currency);
    s += conversions_text(pool.conversions, pool.currency);
    s += "Result\n" + result_text(pool.plan, style);
  }
  if (!p.unmanaged.empty()) {
    s += "\nUnmanaged holdings (outside every part)\n";
    Table t({{"pool", Align::left, true},
             {"account", Align::left, true},
             {"symbol"},
             {"quantity", Align::right},
             {"price", Align::right},
             {"value", Align::right},
             {"action"}});
    for (const auto& u : p.unmanaged)
      t.add_row({u.pool, u.account, u.symbol, u.quantity.str(), u.price.str(), money(u.value),
                 u.sold ? "sold" : "left alone"});
    s += t.render(style);
  }
  for (const auto& n : p.notes) s += fmt::format("Note: {}\n", printable(n));
  s += "\nCautions:\n";
  for (const auto& c : p.cautions) s += "  - " + c + "\n";
  return s;
}

std::string proposals_list_json(const std::vector<store::ProposalRow>& all) {
  std::string s;
  JsonWriter j(s);
  begin_document(j, "proposals-list", 2).key("proposals").begin_array();
  for (const auto& p : all) {
    j.begin_object();
    j.member("id", static_cast<long long>(p.id)).member("kind", p.kind);
    j.member("as_of", p.as_of.str());
    j.member("rule", p.rule_name).member("rule_file", p.rule_file);
    j.member("rule_sha256", p.rule_sha256).member("pool_value", p.pool_value);
    j.member("orders", static_cast<unsigned long long>(p.order_count));
    j.member("saved_at", p.saved_at);
    j.end_object();
  }
  j.end_array().end_object();
  s += '\n';
  return s;
}

std::string proposals_list_text(const std::vector<store::ProposalRow>& all, const Style& style) {
  Table t({{"id", Align::right},
           {"as of"},
           {"rule", Align::left, true},
           {"orders", Align::right},
           {"pool value", Align::right},
           {"rule sha256", Align::left, false, 2},
           {"saved at", Align::left, false, 1}});
  for (const auto& p : all)
    t.add_row({std::to_string(p.id), p.as_of.str(),
               p.kind == "plan" ? "plan " + p.rule_name : p.rule_name,
               std::to_string(p.order_count), money(p.pool_value), p.rule_sha256.substr(0, 12),
               p.saved_at});
  return t.render(style);
}

std::string review_json(const rules::Review& r) {
  const auto& p = r.proposal;
  std::string s;
  JsonWriter j(s);
  begin_document(j, "proposal", 3);
  j.member("id", static_cast<long long>(p.id)).member("kind", p.kind);
  j.member("as_of", p.as_of.str());
  j.member("rule", p.rule_name).member("rule_file", p.rule_file);
  j.member("rule_sha256", p.rule_sha256).member("pool_value", p.pool_value);
  j.member("saved_at", p.saved_at);
  j.key("lines").begin_array();
  for (const auto& l : r.lines) {
    j.begin_object();
    if (l.part.empty())
      j.key("part").null();
    else
      j.member("part", l.part);
    j.member("account", l.account).member("symbol", l.symbol).member("side", l.side);
    j.member("proposed", l.proposed).member("est_price", l.est_price);
    j.member("traded", l.traded).member("avg_price", l.avg_price);
    j.member("status", l.status);
    j.end_object();
  }
  j.end_array();
  j.key("planned_cash").begin_array();
  for (const auto& c : r.cash)
    j.begin_object()
        .member("account", c.account)
        .member("planned", c.planned)
        .member("booked_since", c.booked)
        .member("status", c.status)
        .end_object();
  j.end_array();
  j.member("cautions", rules::proposal_cautions(p.as_of));
  j.end_object();
  s += '\n';
  return s;
}

std::string review_text(const rules::Review& r, const Style& style) {
  const auto& p = r.proposal;
  const bool plan = p.kind == "plan";
  std::string s =
      fmt::format("Proposal {} of {} '{}' as of {}, saved {}\n", p.id, plan ? "plan" : "rule",
                  printable(p.rule_name), p.as_of.str(), p.saved_at);
  s += fmt::format("{} file {} (sha256 {}); {} value {}\n", plan ? "Plan" : "Rule",
                   printable(p.rule_file), p.rule_sha256, plan ? "managed" : "pool",
                   money(p.pool_value));
  auto table = [&](const std::vector<const rules::ReviewLine*>& lines) {
    Table t({{"account", Align::left, true},
             {"symbol"},
             {"side"},
             {"proposed", Align::right},
             {"est. price", Align::right},
             {"traded since", Align::right},
             {"avg. price", Align::right},
             {"status"}});
    for (const auto* l : lines)
      t.add_row({l->account, l->symbol, l->side, l->proposed.is_zero() ? "" : l->proposed.str(),
                 l->est_price.is_zero() ? "" : l->est_price.str(), l->traded.str(),
                 l->avg_price ? l->avg_price->str() : "", l->status});
    return t.render(style);
  };
  if (!r.cash.empty()) {
    // Planned cash was never booked by the proposal: set against what was since.
    Table t({{"account", Align::left, true},
             {"planned", Align::left},
             {"amount", Align::right},
             {"booked since", Align::right},
             {"status"}});
    for (const auto& c : r.cash)
      t.add_row({c.account, c.planned.is_negative() ? "withdraw" : "deposit",
                 money(c.planned.abs()), money(c.booked.abs()), c.status});
    s += "\nPlanned cash, not booked when proposed\n" + t.render(style);
  }
  if (r.lines.empty()) {
    s += "\nThe proposal had no orders and nothing was traded since.\n";
  } else if (!plan) {
    std::vector<const rules::ReviewLine*> all;
    for (const auto& l : r.lines) all.push_back(&l);
    s += "\n" + table(all);
  } else {
    // Each part's orders under its name, in the order the parts first appear;
    // trades that were not proposed last.
    std::vector<std::string> parts;
    for (const auto& l : r.lines)
      if (std::find(parts.begin(), parts.end(), l.part) == parts.end()) parts.push_back(l.part);
    std::stable_partition(parts.begin(), parts.end(), [](const auto& n) { return !n.empty(); });
    for (const auto& part : parts) {
      std::vector<const rules::ReviewLine*> lines;
      for (const auto& l : r.lines)
        if (l.part == part) lines.push_back(&l);
      s +=
          part.empty() ? "\nTraded, not proposed\n" : fmt::format("\nPart '{}'\n", printable(part));
      s += table(lines);
    }
  }
  s += fmt::format(
      "\nThe proposal was the output of your own {}, not advice; past results do not predict "
      "future ones.\n",
      plan ? "plan" : "rule");
  return s;
}

}  // namespace keel::report
