// Commands that write the ledger: init, account, security, record, void.
#include <fmt/format.h>

#include "cli/context.h"
#include "core/error.h"
#include "store/ledger_store.h"

namespace keel::cli {
namespace {

void add_init(CLI::App& app, Context& ctx) {
  auto* cmd = app.add_subcommand("init", "Create an empty ledger (or bring an old one up to date)");
  cmd->callback([&ctx] {
    auto db = ctx.open_ledger(/*create=*/true);
    out(fmt::format("ledger ready at {} (schema version {})\n", db.path().string(),
                    db.schema_version()));
  });
}

void add_account(CLI::App& app, Context& ctx) {
  auto* group = app.add_subcommand("account", "Add or list accounts");
  group->require_subcommand(1);

  auto* add = group->add_subcommand("add", "Add an account");
  static std::string name, currency = "USD", basis = "fifo";
  static bool allow_negative = false;
  add->add_option("NAME", name, "Account name")->required();
  add->add_option("--currency", currency, "Three-letter currency code");
  add->add_option("--basis", basis, "Cost-basis method: fifo, lifo, hifo, average, specific");
  add->add_flag("--allow-negative-cash", allow_negative, "Let cash go below zero (margin)");
  add->callback([&ctx] {
    Account a;
    a.name = name;
    a.currency = normalize_currency(currency);
    a.basis = parse_basis_method(basis);
    a.allow_negative_cash = allow_negative;
    auto db = ctx.open_ledger();
    store::WriteTransaction tx(db);
    const auto id = store::insert_account(db, a);
    tx.commit();
    out(fmt::format("account {} '{}' added ({}, {})\n", id, a.name, a.currency,
                    to_string(a.basis)));
  });
}

void add_security(CLI::App& app, Context& ctx) {
  auto* group = app.add_subcommand("security", "Add or list securities");
  group->require_subcommand(1);

  auto* add = group->add_subcommand("add", "Add a security");
  static std::string symbol, name, kind, currency = "USD", lot_size = "1", sector;
  add->add_option("SYMBOL", symbol, "Symbol, unique in the ledger")->required();
  add->add_option("--name", name, "Full name")->required();
  add->add_option("--kind", kind, "stock, fund, bond, index or currency")->required();
  add->add_option("--currency", currency, "Three-letter currency code");
  add->add_option("--lot-size", lot_size, "Smallest tradable multiple (1 = whole units)");
  add->add_option("--sector", sector, "Sector label, for rule universes");
  add->callback([&ctx] {
    Security s;
    s.symbol = symbol;
    s.name = name;
    s.kind = parse_security_kind(kind);
    s.currency = normalize_currency(currency);
    s.lot_size = Decimal::parse(lot_size);
    if (!sector.empty()) s.sector = sector;
    auto db = ctx.open_ledger();
    store::WriteTransaction tx(db);
    const auto id = store::insert_security(db, s);
    tx.commit();
    out(fmt::format("security {} '{}' added ({})\n", id, s.symbol, to_string(s.kind)));
  });
}

}  // namespace

void register_ledger_commands(CLI::App& app, Context& ctx) {
  add_init(app, ctx);
  add_account(app, ctx);
  add_security(app, ctx);
}

}  // namespace keel::cli
