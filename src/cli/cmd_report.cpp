// Commands that read the ledger and print: holdings, lots, history, gains, lists.
#include <fmt/format.h>

#include <algorithm>
#include <map>
#include <memory>

#include "cli/action_rows.h"
#include "cli/context.h"
#include "cli/csv_rows.h"
#include "cli/history_rows.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/json.h"
#include "core/text.h"
#include "ledger/holdings.h"
#include "ledger/posting.h"
#include "ledger/tax.h"
#include "report/format.h"
#include "report/gain_rows.h"
#include "report/json_schema.h"
#include "report/table.h"
#include "store/action_store.h"
#include "store/ledger_store.h"

namespace keel::cli {
namespace {

using report::Align;
using report::money;
using report::Table;

// Runs `write` on a JSON writer and prints the document.
template <typename Write>
void print_json(Write&& write) {
  std::string text;
  JsonWriter j(text);
  write(j);
  out(text + "\n");
}
std::string percent(const Decimal& part, const Decimal& whole) {
  if (whole.is_zero()) return "";
  return Decimal::divide(part * Decimal(100), whole, 2).fixed(2) + "%";
}

struct ViewOptions {
  std::string as_of, account, from, to, currency;
  int year = 0;
  bool json = false, csv = false;
};

void add_holdings(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ViewOptions>();
  auto* cmd = app.add_subcommand("holdings", "What is held, at cost and at market, with cash");
  add_examples(*cmd,
               {"keel holdings --as-of 2025-12-31", "keel holdings --account Taxable --json"});
  cmd->add_option("--as-of", o->as_of, "Day to value at, YYYY-MM-DD (default: today)");
  add_account_option(*cmd, o->account);
  add_currency_option(*cmd, o->currency);
  add_json_and_csv_flags(*cmd, o->json, o->csv);
  cmd->callback([&ctx, o] {
    const auto asked = currency_option(o->currency);
    const Date as_of = date_option_or_today(o->as_of, "--as-of");
    auto db = ctx.open_ledger();
    const auto account = text_option(o->account);
    const std::string currency = ledger::reporting_currency(db, asked, account);
    const auto h =
        with_currency_option(asked, [&] { return ledger::holdings(db, as_of, account, currency); });
    if (o->json) {
      print_json([&](JsonWriter& j) {
        // A position or cash in another currency: its own figures and the rate used.
        auto rate = [&](const market::FxQuote& q) {
          j.key("rate").begin_object().member("pair", q.base + "/" + q.quote);
          j.member("rate", q.rate).member("day", q.day.str());
          j.member("derived", q.how == market::FxHow::direct ? "" : q.describe()).end_object();
        };
        report::begin_document(j, "holdings", 2).member("as_of", h.as_of.str());
        j.member("currency", currency);
        j.key("positions").begin_array();
        for (const auto& p : h.positions) {
          j.begin_object().member("account", p.account).member("symbol", p.symbol);
          j.member("quantity", p.quantity).member("cost_basis", p.cost_basis);
          j.member("price", p.price).member("market_value", p.market_value);
          j.member("unrealized_gain", p.unrealized_gain);
          if (p.rate) {
            j.member("currency", p.currency).member("local_value", p.local_value);
            rate(*p.rate);
          }
          j.end_object();
        }
        j.end_array().key("cash").begin_array();
        for (const auto& c : h.cash) {
          j.begin_object().member("account", c.account).member("amount", c.amount);
          if (c.rate) {
            j.member("currency", c.currency).member("value", c.value);
            rate(*c.rate);
          }
          j.end_object();
        }
        j.end_array().member("total_value", h.total_value).end_object();
      });
      return;
    }
    if (o->csv) {
      // A line in another currency: its price in that currency, its market
      // value converted; cash in another currency: the amount held in it.
      CsvRows csv({"account", "symbol", "quantity", "cost_basis", "price", "price_is_close",
                   "market_value", "unrealized_gain", "currency"});
      for (const auto& p : h.positions)
        csv.add({p.account, p.symbol, p.quantity.str(), p.cost_basis.str(), p.price.str(),
                 p.price_is_close ? "yes" : "no", p.market_value.str(), p.unrealized_gain.str(),
                 p.rate ? p.currency : ""});
      for (const auto& c : h.cash)
        csv.add({c.account, "", c.rate ? c.amount.str() : "", "", "", "",
                 (c.rate ? c.value : c.amount).str(), "", c.rate ? c.currency : ""});
      out(csv.text());
      return;
    }
    // Too narrow a terminal loses the price first, then the weight, then
    // the cost basis; names shorten before any of them.
    Table t({{"account", Align::left, true},
             {"symbol"},
             {"quantity", Align::right},
             {"cost basis", Align::right, false, 1},
             {"price", Align::right, false, 3},
             {"market value", Align::right},
             {"unrealized", Align::right},
             {"weight", Align::right, false, 2}});
    // A line in another currency shows its local price and amount; the
    // rates used are listed under the table.
    std::vector<std::string> rates_used;
    auto note_rate = [&](const market::FxQuote& q) {
      if (q.how == market::FxHow::same) return;  // cash in the reporting currency itself
      const std::string text = q.describe();
      if (std::find(rates_used.begin(), rates_used.end(), text) == rates_used.end())
        rates_used.push_back(text);
    };
    for (const auto& p : h.positions) {
      std::string price = p.price.str() + (p.price_is_close ? "" : "*");
      if (p.rate) {
        price += " " + p.currency;
        note_rate(*p.rate);
      }
      t.add_row({p.account, p.symbol, p.quantity.str(), money(p.cost_basis), price,
                 money(p.market_value), money(p.unrealized_gain),
                 percent(p.market_value, h.total_value)});
    }
    for (const auto& c : h.cash) {
      if (c.rate) {
        note_rate(*c.rate);
        t.add_row({c.account, "(cash " + c.currency + ")", c.amount.str(), "", "", money(c.value),
                   "", percent(c.value, h.total_value)});
        continue;
      }
      t.add_row(
          {c.account, "(cash)", "", "", "", money(c.amount), "", percent(c.amount, h.total_value)});
    }
    t.add_rule();
    t.add_row({"total", "", "", "", "", money(h.total_value), "", ""});
    out(fmt::format("Holdings as of {}{}\n\n", h.as_of.str(), asked ? " in " + *asked : ""));
    out(t.render(ctx.style()));
    bool any_trade_price = false;
    for (const auto& p : h.positions) any_trade_price |= !p.price_is_close;
    if (any_trade_price) out("* no close on or before the day; valued at the last trade price\n");
    for (const auto& r : rates_used) out(fmt::format("converted at {}\n", r));
  });
}

void add_lots(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ViewOptions>();
  auto* cmd = app.add_subcommand("lots", "Open tax lots: acquisition day, quantity, cost");
  add_examples(*cmd, {"keel lots --as-of 2025-12-31 --account Taxable"});
  cmd->add_option("--as-of", o->as_of, "Day, YYYY-MM-DD (default: today)");
  add_account_option(*cmd, o->account);
  add_currency_option(*cmd, o->currency);
  add_json_and_csv_flags(*cmd, o->json, o->csv);
  cmd->callback([&ctx, o] {
    const auto asked = currency_option(o->currency);
    const Date as_of = date_option_or_today(o->as_of, "--as-of");
    auto db = ctx.open_ledger();
    const auto account = text_option(o->account);
    const std::string currency = ledger::reporting_currency(db, asked, account);
    const auto lots = with_currency_option(
        asked, [&] { return ledger::open_lots(db, as_of, account, currency); });
    if (o->json) {
      print_json([&](JsonWriter& j) {
        report::begin_document(j, "lots", 2).member("currency", currency);
        j.key("lots").begin_array();
        for (const auto& l : lots) {
          j.begin_object().member("account", l.account).member("symbol", l.symbol);
          j.member("lot", static_cast<long long>(l.lot.lot_id));
          j.member("acquired", l.lot.acquired.str()).member("quantity", l.lot.quantity);
          j.member("cost", l.lot.cost).end_object();
        }
        j.end_array().end_object();
      });
      return;
    }
    if (o->csv) {
      CsvRows csv({"account", "symbol", "lot", "acquired", "quantity", "cost"});
      for (const auto& l : lots)
        csv.add({l.account, l.symbol, std::to_string(l.lot.lot_id), l.lot.acquired.str(),
                 l.lot.quantity.str(), l.lot.cost.str()});
      out(csv.text());
      return;
    }
    Table t({{"account", Align::left, true},
             {"symbol"},
             {"lot", Align::right},
             {"acquired"},
             {"quantity", Align::right},
             {"cost", Align::right},
             {"unit cost", Align::right, false, 1}});
    for (const auto& l : lots)
      t.add_row({l.account, l.symbol, std::to_string(l.lot.lot_id), l.lot.acquired.str(),
                 l.lot.quantity.str(), money(l.lot.cost),
                 Decimal::divide(l.lot.cost, l.lot.quantity, 4).str()});
    out(t.render(ctx.style()));
  });
}

void gain_json(JsonWriter& j, const ledger::GainLine& g) {
  j.begin_object().member("account", g.account).member("symbol", g.symbol);
  j.member("lot", static_cast<long long>(g.part.lot_id));
  // A disposal is by a sell or by a corporate action (keel action list).
  if (g.part.action_id != 0)
    j.member("action", static_cast<long long>(g.part.action_id));
  else
    j.member("sell", static_cast<long long>(g.part.sell_txn_id));
  j.member("acquired", g.part.acquired.str()).member("disposed", g.part.disposed.str());
  j.member("quantity", g.part.quantity).member("proceeds", g.part.proceeds);
  j.member("cost", g.part.cost).member("gain", g.part.gain());
  j.member("term", g.long_term ? "long" : "short");
  j.member("tax_status", std::string(to_string(g.tax_status)));
  // A security in another currency: its local figures and the split of the
  // gain (docs/methods-ledger.md).
  if (g.part.local_cost) {
    j.member("local_proceeds", *g.part.local_proceeds).member("local_cost", *g.part.local_cost);
    j.member("price_part", g.part.price_part());
    j.member("currency_part", g.part.currency_part());
  }
  if (g.repurchase) {
    j.key("repurchase").begin_object().member("buy", static_cast<long long>(g.repurchase->txn_id));
    j.member("account", g.repurchase->account).member("date", g.repurchase->day.str());
    j.end_object();
  }
  j.end_object();
}

// The table of some gain lines with their totals by term.
std::string gain_table(const std::vector<ledger::GainLine>& gains, const report::Style& style) {
  const auto totals = ledger::totals_by_term(gains);
  Table t(report::gain_columns("term"));
  for (const auto& g : gains) t.add_row(report::displayed(report::gain_cells(g)));
  t.add_rule();
  t.add_row({"short-term", "", "", "", "", "", "", "", money(totals.short_term.gain), ""});
  t.add_row({"long-term", "", "", "", "", "", "", "", money(totals.long_term.gain), ""});
  t.add_row({"total", "", "", "", "", "", "", "", money(totals.all().gain), ""});
  return t.render(style);
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
  add_currency_option(*cmd, o->currency);
  add_json_and_csv_flags(*cmd, o->json, o->csv);
  cmd->callback([&ctx, o, window] {
    if (o->year != 0 && (o->year < 1 || o->year > 9999))
      throw InputError(fmt::format("--year: '{}' is not a calendar year (1 to 9999)", o->year));
    if (window->count() > 0) ledger::check_repurchase_window(o->repurchase_window);
    const auto asked = currency_option(o->currency);
    auto db = ctx.open_ledger();
    const auto account = text_option(o->account);
    const std::string currency = ledger::reporting_currency(db, asked, account);
    auto gains = with_currency_option(asked, [&] {
      return ledger::realized_gains(db, o->year ? std::optional<int>(o->year) : std::nullopt,
                                    account, std::nullopt, currency);
    });
    if (window->count() > 0) ledger::flag_repurchases(db, gains, o->repurchase_window);
    std::vector<ledger::GainLine> taxable, elsewhere;
    for (auto& g : gains) (g.taxable() ? taxable : elsewhere).push_back(std::move(g));
    const auto totals = ledger::totals_by_term(taxable);
    if (o->json) {
      print_json([&](JsonWriter& j) {
        report::begin_document(j, "gains", 2).member("currency", currency);
        j.key("gains").begin_array();
        for (const auto& g : taxable) gain_json(j, g);
        j.end_array();
        j.member("total_short", totals.short_term.gain).member("total_long", totals.long_term.gain);
        j.member("total", totals.all().gain);
        j.key("not_taxable").begin_array();
        for (const auto& g : elsewhere) gain_json(j, g);
        j.end_array();
        j.member("not_taxable_total", ledger::totals_by_term(elsewhere).all().gain);
        if (window->count() > 0) j.member("repurchase_window_days", o->repurchase_window);
        j.end_object();
      });
      return;
    }
    if (o->csv) {
      // Every line, taxable or not, with the account's tax status on its day.
      CsvRows csv({"account", "symbol", "lot", "sell", "action", "acquired", "disposed", "quantity",
                   "proceeds", "cost", "gain", "term", "tax_status"});
      for (const auto* list : {&taxable, &elsewhere})
        for (const auto& g : *list)
          csv.add({g.account, g.symbol, std::to_string(g.part.lot_id),
                   g.part.action_id != 0 ? "" : std::to_string(g.part.sell_txn_id),
                   g.part.action_id != 0 ? std::to_string(g.part.action_id) : "",
                   g.part.acquired.str(), g.part.disposed.str(), g.part.quantity.str(),
                   g.part.proceeds.str(), g.part.cost.str(), g.part.gain().str(),
                   g.long_term ? "long" : "short", std::string(to_string(g.tax_status))});
      out(csv.text());
      return;
    }
    out(gain_table(taxable, ctx.style()));
    if (!elsewhere.empty()) {
      out("\nNot a taxable event here (tax-deferred and tax-exempt accounts):\n");
      out(gain_table(elsewhere, ctx.style()));
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
  add_json_and_csv_flags(*cmd, o->json, o->csv);
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
    std::string json;
    JsonWriter j(json);
    report::begin_document(j, "history", 1).key("transactions").begin_array();
    Table t = history_table();
    CsvRows csv = history_csv();
    for (const auto& x : txns) {
      if (only && x.account_id != *only) continue;
      if (x.date < from || x.date > to) continue;
      if (o->json)
        history_json(j, x, names, voided);
      else if (o->csv)
        csv.add(history_csv_cells(x, names, voided));
      else
        t.add_row(history_cells(x, names, voided));
    }
    j.end_array().end_object();
    // Corporate actions concern every account that holds the security: they
    // are listed under the transactions, in the text form only.
    const auto actions = store::list_actions(db);
    const ActionRows rows(names.symbols, actions);
    Table at = ActionRows::table();
    for (const auto& a : actions)
      if (a.date >= from && a.date <= to) at.add_row(rows.cells(a));
    if (o->json)
      out(json + "\n");
    else if (o->csv)
      out(csv.text());
    else if (at.empty())
      out(t.render(ctx.style()));
    else
      out(t.render(ctx.style()) + "\nCorporate actions:\n" + at.render(ctx.style()));
  });
}

void add_lists(CLI::App& app, Context& ctx) {
  auto json_accounts = std::make_shared<bool>(false);
  auto* accounts = app.get_subcommand("account")->add_subcommand("list", "List accounts");
  add_examples(*accounts, {"keel account list", "keel account list --json"});
  add_json_flag(*accounts, *json_accounts);
  accounts->callback([&ctx, json_accounts] {
    auto db = ctx.open_ledger();
    std::string json;
    JsonWriter j(json);
    report::begin_document(j, "accounts", 1).key("accounts").begin_array();
    Table t({{"id", Align::right},
             {"name", Align::left, true},
             {"currency"},
             {"basis"},
             {"negative cash"},
             {"tax status (from)"}});
    const auto statuses = ledger::TaxStatuses::load(db);
    for (const auto& a : store::list_accounts(db)) {
      j.begin_object().member("id", static_cast<long long>(a.id)).member("name", a.name);
      j.member("currency", a.currency).member("basis", std::string(to_string(a.basis)));
      j.member("allow_negative_cash", a.allow_negative_cash);
      // Every recorded status, oldest first; "since opening" for the first.
      std::vector<const TaxStatusChange*> history;
      for (const auto& c : statuses.changes())
        if (c.account_id == a.id) history.push_back(&c);
      std::string shown = "taxable";
      j.member("tax_status",
               history.empty() ? "taxable" : std::string(to_string(history.back()->status)));
      j.key("tax_status_history").begin_array();
      for (const auto* c : history) {
        const bool opening = c->from == ledger::since_opening();
        j.begin_object().member("status", std::string(to_string(c->status)));
        j.member("from", opening ? std::nullopt : std::optional<std::string>(c->from.str()));
        j.end_object();
        shown = opening ? std::string(to_string(c->status))
                        : fmt::format("{} ({})", to_string(c->status), c->from.str());
      }
      j.end_array().end_object();
      t.add_row({std::to_string(a.id), a.name, a.currency, std::string(to_string(a.basis)),
                 a.allow_negative_cash ? "allowed" : "no", shown});
    }
    j.end_array().end_object();
    out(*json_accounts ? json + "\n" : t.render(ctx.style()));
  });

  auto json_securities = std::make_shared<bool>(false);
  auto* securities = app.get_subcommand("security")->add_subcommand("list", "List securities");
  add_examples(*securities, {"keel security list", "keel security list --json"});
  add_json_flag(*securities, *json_securities);
  securities->callback([&ctx, json_securities] {
    auto db = ctx.open_ledger();
    std::string json;
    JsonWriter j(json);
    report::begin_document(j, "securities", 1).key("securities").begin_array();
    Table t({{"symbol"},
             {"name", Align::left, true},
             {"kind"},
             {"currency"},
             {"lot size", Align::right, false, 1},
             {"sector", Align::left, true},
             {"country"}});
    for (const auto& s : store::list_securities(db)) {
      j.begin_object().member("symbol", s.symbol).member("name", s.name);
      j.member("kind", std::string(to_string(s.kind))).member("currency", s.currency);
      j.member("lot_size", s.lot_size).member("sector", s.sector);
      j.member("country", s.country).end_object();
      t.add_row({s.symbol, s.name, std::string(to_string(s.kind)), s.currency, s.lot_size.str(),
                 s.sector.value_or(""), s.country.value_or("")});
    }
    j.end_array().end_object();
    out(*json_securities ? json + "\n" : t.render(ctx.style()));
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
