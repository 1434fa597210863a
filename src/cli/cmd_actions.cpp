// keel record merger|spinoff|return-of-capital|stock-dividend|delisting and
// keel action list|void: corporate actions (ledger/action_posting.h).
#include <fmt/format.h>

#include <map>
#include <memory>

#include "cli/action_rows.h"
#include "cli/context.h"
#include "cli/history_rows.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/json.h"
#include "core/text.h"
#include "ledger/action_posting.h"
#include "ledger/actions.h"
#include "report/json_schema.h"
#include "report/table.h"
#include "store/action_store.h"
#include "store/ledger_store.h"

namespace keel::cli {
namespace {

using report::Align;
using report::Table;

struct ActionOptions {
  std::string date, symbol, into, ratio, cash, cost_percent, in_lieu, note;
  bool allow_future = false, market_only = false;
};

struct ActionSpec {
  ActionKind kind;
  const char* name;
  const char* help;
  const char* example;
  const char* ratio_help;  // nullptr: no --ratio
  const char* cash_help;   // nullptr: no --cash
  const char* percent_help;
  const char* into_help;
  bool in_lieu;
};

constexpr ActionSpec kActionSpecs[] = {
    {ActionKind::merger, "merger",
     "A merger or takeover: every lot of a security becomes units of another, cash, or both",
     "keel record merger --date 2025-09-01 --symbol KESTR --into ORMOL --ratio 0.5 --cash 4",
     "Units of --into received per unit held (leave out for an all-cash takeover)",
     "Cash received per unit held",
     "Share of each lot's cost carried to the units received when there is cash too (default: "
     "by market value on the day)",
     "Security whose units are received (the acquirer)", true},
    {ActionKind::spinoff, "spinoff",
     "A spin-off: holders receive units of a new security and part of each lot's cost goes with "
     "them",
     "keel record spinoff --date 2025-09-01 --symbol KESTR --into KSPIN --ratio 0.2 "
     "--cost-percent 12.5",
     "Units of --into received per unit held", nullptr,
     "Share of each lot's cost that goes to the new units (as the company states it)",
     "The new security (add it first with 'keel security add')", true},
    {ActionKind::return_of_capital, "return-of-capital",
     "A return of capital: cash per unit that lowers each lot's cost instead of counting as "
     "income",
     "keel record return-of-capital --date 2025-09-01 --symbol KESTR --cash 1.5", nullptr,
     "Cash paid per unit held", nullptr, nullptr, false},
    {ActionKind::stock_dividend, "stock-dividend",
     "A stock dividend: new units of the same security per unit held, holding period carried over",
     "keel record stock-dividend --date 2025-09-01 --symbol KESTR --ratio 0.05",
     "New units per unit held (0.05 = five per hundred)", nullptr, nullptr, nullptr, true},
    {ActionKind::delisting, "delisting",
     "The end of trading: every lot is disposed of at a final cash amount per unit (may be 0)",
     "keel record delisting --date 2025-09-01 --symbol KESTR --cash 0", nullptr,
     "Final cash per unit held (0 when nothing is paid)", nullptr, nullptr, false},
};

void add_record_action(CLI::App& group, Context& ctx, const ActionSpec& spec) {
  auto o = std::make_shared<ActionOptions>();
  auto* cmd = group.add_subcommand(spec.name, spec.help);
  add_examples(*cmd, {spec.example});
  cmd->add_option("--date", o->date, "Day the action takes effect, YYYY-MM-DD")->required();
  cmd->add_option("--symbol", o->symbol, "Security the action concerns")->required();
  if (spec.into_help) cmd->add_option("--into", o->into, spec.into_help)->required();
  if (spec.ratio_help) cmd->add_option("--ratio", o->ratio, spec.ratio_help);
  if (spec.cash_help) cmd->add_option("--cash", o->cash, spec.cash_help);
  if (spec.percent_help) cmd->add_option("--cost-percent", o->cost_percent, spec.percent_help);
  CLI::Option* lieu = nullptr;
  if (spec.in_lieu)
    lieu = cmd->add_option(
        "--cash-in-lieu", o->in_lieu,
        "Pay the fraction of a unit each account receives in cash, at this price per "
        "unit");
  cmd->add_option("--note", o->note, "Free text");
  cmd->add_flag(ledger::kAllowFutureFlag, o->allow_future, "Accept a --date after today");
  cmd->add_flag(ledger::kMarketOnlyFlag, o->market_only,
                "No account holds the security: record the action as market data for "
                "back-tests and signal checks");
  const ActionKind kind = spec.kind;
  cmd->callback([&ctx, o, kind, lieu] {
    ledger::ActionRequest r;
    r.kind = kind;
    r.date = date_option_or_today(o->date, "--date");
    r.symbol = o->symbol;
    r.target = text_option(o->into);
    r.ratio = decimal_option(o->ratio, "--ratio");
    r.cash = decimal_option(o->cash, "--cash");
    r.cost_percent = decimal_option(o->cost_percent, "--cost-percent");
    r.cash_in_lieu = lieu && lieu->count() > 0;
    r.in_lieu_price = decimal_option(o->in_lieu, "--cash-in-lieu");
    r.note = text_option(o->note);
    r.allow_future = o->allow_future;
    r.market_only = o->market_only;
    auto db = ctx.open_ledger(store::Access::write);
    const auto posted = ledger::post_action(db, r);
    std::string text = fmt::format("action {} posted: {} of {} on {}\n", posted.id,
                                   action_word(kind), printable(r.symbol), r.date.str());
    if (posted.derived_cost_percent)
      text += fmt::format(
          "{}% of each lot's cost goes to the {} units, by market value on the day (give "
          "--cost-percent to state it)\n",
          posted.derived_cost_percent->str(), printable(*r.target));
    out(text);
  });
}

void add_action_group(CLI::App& app, Context& ctx) {
  auto* group = app.add_subcommand("action", "List or void corporate actions");
  group->require_subcommand(1);

  auto json = std::make_shared<bool>(false);
  auto* list = group->add_subcommand("list", "Every corporate action, voided ones marked");
  add_examples(*list, {"keel action list", "keel action list --json"});
  add_json_flag(*list, *json);
  list->callback([&ctx, json] {
    auto db = ctx.open_ledger();
    const auto all = store::list_actions(db);
    const ActionRows rows(LedgerNames::load(db).symbols, all);
    std::string text;
    JsonWriter j(text);
    report::begin_document(j, "actions", 1).key("actions").begin_array();
    Table t = ActionRows::table();
    for (const auto& a : all) {
      rows.json(j, a);
      t.add_row(rows.cells(a));
    }
    j.end_array().end_object();
    if (*json)
      out(text + "\n");
    else
      out(all.empty() ? std::string("no corporate actions recorded\n") : t.render(ctx.style()));
  });

  struct VoidOptions {
    std::int64_t id = 0;
    std::string reason;
  };
  auto v = std::make_shared<VoidOptions>();
  auto* cancel = group->add_subcommand(
      "void", "Cancel a corporate action by recording a void (nothing is ever deleted)");
  add_examples(*cancel, {"keel action void 3 --reason \"wrong ratio\""});
  cancel->add_option("ID", v->id, "Action id (see 'keel action list')")->required();
  cancel->add_option("--reason", v->reason, "Why it is cancelled")->required();
  cancel->callback([&ctx, v] {
    auto db = ctx.open_ledger(store::Access::write);
    const auto id = ledger::void_action(db, v->id, v->reason);
    out(fmt::format("void {} recorded: corporate action {} is out of the books\n", id, v->id));
  });
  add_examples(*group, {"keel action list"});
}

}  // namespace

void register_action_commands(CLI::App& app, Context& ctx) {
  auto* record = app.get_subcommand("record");
  for (const auto& spec : kActionSpecs) add_record_action(*record, ctx, spec);
  add_action_group(app, ctx);
}

}  // namespace keel::cli
