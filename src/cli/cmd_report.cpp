// Commands that read the ledger and print: holdings, lots, history, gains, lists.
#include <fmt/format.h>

#include <map>
#include <memory>
#include <nlohmann/json.hpp>

#include "cli/context.h"
#include "cli/history_rows.h"
#include "cli/options.h"
#include "cli/print.h"
#include "core/error.h"
#include "core/text.h"
#include "io/json.h"
#include "ledger/holdings.h"
#include "ledger/posting.h"
#include "ledger/tax.h"
#include "report/gain_rows.h"
#include "report/table.h"
#include "store/ledger_store.h"

namespace keel::cli {
namespace {

using Json = nlohmann::ordered_json;
using report::Align;
using report::Table;

void print_json(const Json& j) {
  out(io::dump_json(j) + "\n");
}
std::string percent(const Decimal& part, const Decimal& whole) {
  if (whole.is_zero()) return "";
  return Decimal::divide(part * Decimal(100), whole, 2).fixed(2) + "%";
}

struct ViewOptions {
  std::string as_of, account, from, to;
  int year = 0;
  bool json = false;
};

void add_holdings(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ViewOptions>();
  auto* cmd = app.add_subcommand("holdings", "What is held, at cost and at market, with cash");
  add_examples(*cmd,
               {"keel holdings --as-of 2025-12-31", "keel holdings --account Taxable --json"});
  cmd->add_option("--as-of", o->as_of, "Day to value at, YYYY-MM-DD (default: today)");
  add_account_option(*cmd, o->account);
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    auto db = ctx.open_ledger();
    const auto h =
        ledger::holdings(db, date_option_or_today(o->as_of, "--as-of"), text_option(o->account));
    if (o->json) {
      Json j;
      j["as_of"] = h.as_of.str();
      j["positions"] = Json::array();
      for (const auto& p : h.positions)
        j["positions"].push_back({{"account", p.account},
                                  {"symbol", p.symbol},
                                  {"quantity", p.quantity.str()},
                                  {"cost_basis", p.cost_basis.str()},
                                  {"price", p.price.str()},
                                  {"market_value", p.market_value.str()},
                                  {"unrealized_gain", p.unrealized_gain.str()}});
      j["cash"] = Json::array();
      for (const auto& c : h.cash)
        j["cash"].push_back({{"account", c.account}, {"amount", c.amount.str()}});
      j["total_value"] = h.total_value.str();
      print_json(j);
      return;
    }
    Table t({{"account"},
             {"symbol"},
             {"quantity", Align::right},
             {"cost basis", Align::right},
             {"price", Align::right},
             {"market value", Align::right},
             {"unrealized", Align::right},
             {"weight", Align::right}});
    for (const auto& p : h.positions)
      t.add_row({p.account, p.symbol, p.quantity.str(), money(p.cost_basis),
                 p.price.str() + (p.price_is_close ? "" : "*"), money(p.market_value),
                 money(p.unrealized_gain), percent(p.market_value, h.total_value)});
    for (const auto& c : h.cash)
      t.add_row(
          {c.account, "(cash)", "", "", "", money(c.amount), "", percent(c.amount, h.total_value)});
    t.add_rule();
    t.add_row({"total", "", "", "", "", money(h.total_value), "", ""});
    out(fmt::format("Holdings as of {}\n\n", h.as_of.str()));
    out(t.render({ctx.colour()}));
    bool any_trade_price = false;
    for (const auto& p : h.positions) any_trade_price |= !p.price_is_close;
    if (any_trade_price) out("* no close on or before the day; valued at the last trade price\n");
  });
}

void add_lots(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ViewOptions>();
  auto* cmd = app.add_subcommand("lots", "Open tax lots: acquisition day, quantity, cost");
  add_examples(*cmd, {"keel lots --as-of 2025-12-31 --account Taxable"});
  cmd->add_option("--as-of", o->as_of, "Day, YYYY-MM-DD (default: today)");
  add_account_option(*cmd, o->account);
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    auto db = ctx.open_ledger();
    const auto lots =
        ledger::open_lots(db, date_option_or_today(o->as_of, "--as-of"), text_option(o->account));
    if (o->json) {
      Json j = Json::array();
      for (const auto& l : lots)
        j.push_back({{"account", l.account},
                     {"symbol", l.symbol},
                     {"lot", l.lot.lot_id},
                     {"acquired", l.lot.acquired.str()},
                     {"quantity", l.lot.quantity.str()},
                     {"cost", l.lot.cost.str()}});
      print_json(j);
      return;
    }
    Table t({{"account"},
             {"symbol"},
             {"lot", Align::right},
             {"acquired"},
             {"quantity", Align::right},
             {"cost", Align::right},
             {"unit cost", Align::right}});
    for (const auto& l : lots)
      t.add_row({l.account, l.symbol, std::to_string(l.lot.lot_id), l.lot.acquired.str(),
                 l.lot.quantity.str(), money(l.lot.cost),
                 Decimal::divide(l.lot.cost, l.lot.quantity, 4).str()});
    out(t.render({ctx.colour()}));
  });
}

Json gain_json(const ledger::GainLine& g) {
  Json j{{"account", g.account},
         {"symbol", g.symbol},
         {"lot", g.part.lot_id},
         {"sell", g.part.sell_txn_id},
         {"acquired", g.part.acquired.str()},
         {"disposed", g.part.disposed.str()},
         {"quantity", g.part.quantity.str()},
         {"proceeds", g.part.proceeds.str()},
         {"cost", g.part.cost.str()},
         {"gain", g.part.gain().str()},
         {"term", g.long_term ? "long" : "short"},
         {"tax_status", to_string(g.tax_status)}};
  if (g.repurchase)
    j["repurchase"] = {{"buy", g.repurchase->txn_id},
                       {"account", g.repurchase->account},
                       {"date", g.repurchase->day.str()}};
  return j;
}

// The table of some gain lines with their totals by term.
std::string gain_table(const std::vector<ledger::GainLine>& gains, bool colour) {
  const auto totals = ledger::totals_by_term(gains);
  Table t(report::gain_columns("term"));
  for (const auto& g : gains) t.add_row(report::displayed(report::gain_cells(g)));
  t.add_rule();
  t.add_row({"short-term", "", "", "", "", "", "", "", money(totals.short_term.gain), ""});
  t.add_row({"long-term", "", "", "", "", "", "", "", money(totals.long_term.gain), ""});
  t.add_row({"total", "", "", "", "", "", "", "", money(totals.all().gain), ""});
  return t.render({colour});
}

struct GainsOptions : ViewOptions {
  int repurchase_window = 0;
};

void add_gains(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<GainsOptions>();
  auto* cmd = app.add_subcommand(
      "gains",
      "Realized gains, one line per closed lot part; taxable accounts first, the others apart");
  add_examples(*cmd, {"keel gains --year 2025 --account Taxable --json",
                      "keel gains --year 2025 --repurchase-window 30"});
  cmd->add_option("--year", o->year, "Only disposals in this calendar year");
  add_account_option(*cmd, o->account);
  auto* window =
      cmd->add_option("--repurchase-window", o->repurchase_window,
                      "Flag each sale at a loss with a buy of the same security, in any account, "
                      "this many days before or after it (off unless given)");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o, window] {
    if (o->year != 0 && (o->year < 1 || o->year > 9999))
      throw InputError(fmt::format("--year: '{}' is not a calendar year (1 to 9999)", o->year));
    if (window->count() > 0) ledger::check_repurchase_window(o->repurchase_window);
    auto db = ctx.open_ledger();
    auto gains = ledger::realized_gains(db, o->year ? std::optional<int>(o->year) : std::nullopt,
                                        text_option(o->account));
    if (window->count() > 0) ledger::flag_repurchases(db, gains, o->repurchase_window);
    std::vector<ledger::GainLine> taxable, elsewhere;
    for (auto& g : gains) (g.taxable() ? taxable : elsewhere).push_back(std::move(g));
    const auto totals = ledger::totals_by_term(taxable);
    if (o->json) {
      Json j;
      j["gains"] = Json::array();
      for (const auto& g : taxable) j["gains"].push_back(gain_json(g));
      j["total_short"] = totals.short_term.gain.str();
      j["total_long"] = totals.long_term.gain.str();
      j["total"] = totals.all().gain.str();
      j["not_taxable"] = Json::array();
      for (const auto& g : elsewhere) j["not_taxable"].push_back(gain_json(g));
      j["not_taxable_total"] = ledger::totals_by_term(elsewhere).all().gain.str();
      if (window->count() > 0) j["repurchase_window_days"] = o->repurchase_window;
      print_json(j);
      return;
    }
    out(gain_table(taxable, ctx.colour()));
    if (!elsewhere.empty()) {
      out("\nNot a taxable event here (tax-deferred and tax-exempt accounts):\n");
      out(gain_table(elsewhere, ctx.colour()));
    }
    bool flagged = false;
    for (const auto* list : {&taxable, &elsewhere})
      for (const auto& g : *list) {
        if (!g.repurchase) continue;
        if (!flagged) out("\n");
        flagged = true;
        out(fmt::format(
            "Repurchase: {} lot {} in {}, sold {} at a loss of {}; bought again on {}\n  in {} "
            "(buy {}), within {} days: the loss may be disallowed under local rules.\n",
            printable(g.symbol), g.part.lot_id, printable(g.account), g.part.disposed.str(),
            money(-g.part.gain()), g.repurchase->day.str(), printable(g.repurchase->account),
            g.repurchase->txn_id, o->repurchase_window));
      }
    out("Tax treatment depends on local rules; check with your tax authority or a licensed "
        "professional.\n");
  });
}

void add_history(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ViewOptions>();
  auto* cmd = app.add_subcommand("history", "Posted transactions, voids included");
  add_examples(*cmd, {"keel history --from 2025-12-01 --to 2025-12-31",
                      "keel history --account Taxable --json"});
  add_account_option(*cmd, o->account);
  cmd->add_option("--from", o->from, "First day, YYYY-MM-DD");
  cmd->add_option("--to", o->to, "Last day, YYYY-MM-DD");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    // Inclusive bounds; an absent one is the first or last day a Date can hold.
    const Date from = date_option(o->from, "--from").value_or(Date::from_ymd(1, 1, 1));
    const Date to = date_option(o->to, "--to").value_or(Date::from_ymd(9999, 12, 31));
    auto db = ctx.open_ledger();
    std::optional<std::int64_t> only;
    if (!o->account.empty()) only = store::account_named(db, o->account).id;
    const auto names = LedgerNames::load(db);
    const auto txns = store::list_transactions(db);
    const auto voided = voided_ids(txns);
    Json j = Json::array();
    Table t = history_table();
    for (const auto& x : txns) {
      if (only && x.account_id != *only) continue;
      if (x.date < from || x.date > to) continue;
      if (o->json)
        j.push_back(history_json(x, names, voided));
      else
        t.add_row(history_cells(x, names, voided));
    }
    if (o->json)
      print_json(j);
    else
      out(t.render({ctx.colour()}));
  });
}

void add_lists(CLI::App& app, Context& ctx) {
  auto json_accounts = std::make_shared<bool>(false);
  auto* accounts = app.get_subcommand("account")->add_subcommand("list", "List accounts");
  add_examples(*accounts, {"keel account list", "keel account list --json"});
  add_json_flag(*accounts, *json_accounts);
  accounts->callback([&ctx, json_accounts] {
    auto db = ctx.open_ledger();
    Json j = Json::array();
    Table t({{"id", Align::right},
             {"name"},
             {"currency"},
             {"basis"},
             {"negative cash"},
             {"tax status (from)"}});
    const auto statuses = ledger::TaxStatuses::load(db);
    for (const auto& a : store::list_accounts(db)) {
      // Every recorded status, oldest first; "since opening" for the first.
      Json history = Json::array();
      std::string shown;
      for (const auto& c : statuses.changes()) {
        if (c.account_id != a.id) continue;
        const std::string from = c.from == ledger::since_opening() ? "" : c.from.str();
        history.push_back(
            {{"status", to_string(c.status)}, {"from", from.empty() ? Json() : Json(from)}});
        shown = from.empty() ? std::string(to_string(c.status))
                             : fmt::format("{} ({})", to_string(c.status), from);
      }
      if (history.empty()) shown = "taxable";
      j.push_back({{"id", a.id},
                   {"name", a.name},
                   {"currency", a.currency},
                   {"basis", to_string(a.basis)},
                   {"allow_negative_cash", a.allow_negative_cash},
                   {"tax_status", history.empty() ? Json("taxable") : history.back()["status"]},
                   {"tax_status_history", history}});
      t.add_row({std::to_string(a.id), a.name, a.currency, std::string(to_string(a.basis)),
                 a.allow_negative_cash ? "allowed" : "no", shown});
    }
    *json_accounts ? print_json(j) : out(t.render({ctx.colour()}));
  });

  auto json_securities = std::make_shared<bool>(false);
  auto* securities = app.get_subcommand("security")->add_subcommand("list", "List securities");
  add_examples(*securities, {"keel security list", "keel security list --json"});
  add_json_flag(*securities, *json_securities);
  securities->callback([&ctx, json_securities] {
    auto db = ctx.open_ledger();
    Json j = Json::array();
    Table t({{"symbol"},
             {"name"},
             {"kind"},
             {"currency"},
             {"lot size", Align::right},
             {"sector"},
             {"country"}});
    for (const auto& s : store::list_securities(db)) {
      j.push_back({{"symbol", s.symbol},
                   {"name", s.name},
                   {"kind", to_string(s.kind)},
                   {"currency", s.currency},
                   {"lot_size", s.lot_size.str()},
                   {"sector", s.sector ? Json(*s.sector) : Json()},
                   {"country", s.country ? Json(*s.country) : Json()}});
      t.add_row({s.symbol, s.name, std::string(to_string(s.kind)), s.currency, s.lot_size.str(),
                 s.sector.value_or(""), s.country.value_or("")});
    }
    *json_securities ? print_json(j) : out(t.render({ctx.colour()}));
  });
}

}  // namespace

void register_report_commands(CLI::App& app, Context& ctx) {
  add_holdings(app, ctx);
  add_lots(app, ctx);
  add_history(app, ctx);
  add_gains(app, ctx);
  add_lists(app, ctx);
}

}  // namespace keel::cli
