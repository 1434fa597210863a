// keel security change, keel account rename, keel changes: corrections of
// descriptive fields, with the old values kept (ledger/accounts.h).
#include <fmt/format.h>

#include <memory>

#include "cli/context.h"
#include "cli/history_rows.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/json.h"
#include "core/text.h"
#include "ledger/accounts.h"
#include "report/json_schema.h"
#include "report/table.h"
#include "store/record_change_store.h"

namespace keel::cli {
namespace {

using report::Table;

struct ChangeOptions {
  std::string target, date, symbol, name, sector, lot_size;
  bool clear_sector = false;
};

void add_security_change(CLI::App& group, Context& ctx) {
  auto o = std::make_shared<ChangeOptions>();
  auto* cmd = group.add_subcommand(
      "change", "Change a security's symbol, name, sector or lot size; its history stays with it");
  add_examples(*cmd, {"keel security change KESTR --symbol KSTL --date 2025-09-01",
                      "keel security change KESTR --sector apparel --date 2025-09-01"});
  cmd->add_option("SYMBOL", o->target, "The security as it is now named")->required();
  cmd->add_option("--date", o->date, "First day of the new values, YYYY-MM-DD (default: today)");
  cmd->add_option("--symbol", o->symbol, "New symbol");
  cmd->add_option("--name", o->name, "New full name");
  cmd->add_option("--sector", o->sector, "New sector label");
  cmd->add_flag("--no-sector", o->clear_sector, "Remove the sector label");
  cmd->add_option("--lot-size", o->lot_size, "New smallest tradable multiple");
  cmd->callback([&ctx, o] {
    ledger::SecurityChange change;
    change.symbol = text_option(o->symbol);
    change.name = text_option(o->name);
    change.sector = text_option(o->sector);
    if (o->clear_sector) {
      if (change.sector) throw InputError("--sector and --no-sector: give one of them");
      change.sector = std::string();
    }
    change.lot_size = decimal_option(o->lot_size, "--lot-size");
    const Date effective = date_option_or_today(o->date, "--date");
    auto db = ctx.open_ledger(store::Access::write);
    store::WriteTransaction tx(db);
    const Security now = ledger::change_security(db, o->target, change, effective);
    tx.commit();
    out(fmt::format("security {} is now '{}' ({}) from {}\n", now.id, printable(now.symbol),
                    printable(now.name), effective.str()));
  });
}

void add_account_rename(CLI::App& group, Context& ctx) {
  auto o = std::make_shared<ChangeOptions>();
  auto* cmd = group.add_subcommand("rename", "Rename an account; its history stays with it");
  add_examples(*cmd, {"keel account rename Taxable Brokerage --date 2025-09-01"});
  cmd->add_option("NAME", o->target, "The account as it is now named")->required();
  cmd->add_option("NEW", o->name, "Its new name")->required();
  cmd->add_option("--date", o->date, "First day of the new name, YYYY-MM-DD (default: today)");
  cmd->callback([&ctx, o] {
    const Date effective = date_option_or_today(o->date, "--date");
    auto db = ctx.open_ledger(store::Access::write);
    store::WriteTransaction tx(db);
    ledger::rename_account(db, o->target, o->name, effective);
    tx.commit();
    out(fmt::format("account '{}' is now '{}' from {}\n", printable(o->target), printable(o->name),
                    effective.str()));
  });
}

void add_changes(CLI::App& app, Context& ctx) {
  auto json = std::make_shared<bool>(false);
  auto* cmd = app.add_subcommand(
      "changes", "Every change of an account's or a security's name or fields, with the old value");
  add_examples(*cmd, {"keel changes", "keel changes --json"});
  add_json_flag(*cmd, *json);
  cmd->callback([&ctx, json] {
    auto db = ctx.open_ledger();
    const auto names = LedgerNames::load(db);
    std::string text;
    JsonWriter j(text);
    report::begin_document(j, "changes", 1).key("changes").begin_array();
    Table t({{"from"}, {"record"}, {"now"}, {"field"}, {"old value"}, {"new value"}});
    for (const auto& c : names.changes) {
      const std::string now =
          c.record == "account" ? names.account(c.record_id) : names.symbol(c.record_id);
      j.begin_object().member("effective", c.effective.str()).member("record", c.record);
      j.member("now", now).member("field", c.field);
      j.member("old", c.old_value).member("new", c.new_value).end_object();
      t.add_row({c.effective.str(), c.record, now, c.field, c.old_value.value_or(""),
                 c.new_value.value_or("")});
    }
    j.end_array().end_object();
    if (*json)
      out(text + "\n");
    else
      out(names.changes.empty() ? std::string("no changes recorded\n") : t.render(ctx.style()));
  });
}

}  // namespace

void register_change_commands(CLI::App& app, Context& ctx) {
  add_security_change(*app.get_subcommand("security"), ctx);
  add_account_rename(*app.get_subcommand("account"), ctx);
  add_changes(app, ctx);
}

}  // namespace keel::cli
