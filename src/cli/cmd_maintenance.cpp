// Commands that look after the ledger file: verify, backup, restore.
#include <fmt/format.h>

#include <cstdio>
#include <memory>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/json.h"
#include "core/text.h"
#include "ledger/restore.h"
#include "ledger/verify.h"
#include "report/json_schema.h"
#include "store/maintenance.h"

namespace keel::cli {
namespace {

void add_verify(CLI::App& app, Context& ctx) {
  auto* cmd = app.add_subcommand(
      "verify", "Check the ledger file and recount every balance from the raw transactions");
  add_examples(*cmd, {"keel verify", "keel verify --json"});
  auto json = std::make_shared<bool>(false);
  add_json_flag(*cmd, *json);
  cmd->callback([&ctx, json] {
    auto db = ctx.open_ledger();
    const auto report = ledger::verify(db);
    if (*json) {
      // The document comes out whole either way; problems still end in a
      // LedgerError, so the exit status says the same as the text form.
      std::string text;
      JsonWriter j(text);
      report::begin_document(j, "verify", 1).member("ledger", db.path().string());
      j.member("ok", report.ok());
      j.member("accounts", static_cast<long long>(report.accounts));
      j.member("transactions", static_cast<long long>(report.transactions));
      j.member("problems", report.problems).member("warnings", report.warnings);
      j.key("reconciled").begin_array();
      for (const auto& r : report.reconciled) {
        j.begin_object().member("account", r.account).member("last", r.last.str());
        j.member("locked_through", r.locked_through
                                       ? std::optional<std::string>(r.locked_through->str())
                                       : std::nullopt);
        j.end_object();
      }
      j.end_array().end_object();
      out(text + "\n");
    }
    std::string text;
    for (const auto& p : report.problems) text += "problem: " + p + "\n";
    for (const auto& w : report.warnings) text += "warning: " + w + "\n";
    for (const auto& r : report.reconciled) {
      text += fmt::format("reconciled: '{}' last on {}", printable(r.account), r.last.str());
      if (r.locked_through != r.last)
        text += r.locked_through
                    ? fmt::format(" (reopened: locked through {})", r.locked_through->str())
                    : std::string(" (reopened: not locked)");
      text += "\n";
    }
    if (!*json) out(text);
    if (!report.ok())
      throw LedgerError(fmt::format("{}: {} problem{} found", db.path().string(),
                                    report.problems.size(),
                                    report.problems.size() == 1 ? "" : "s"));
    if (*json) return;
    out(fmt::format("ledger {} verified: {} accounts, {} transactions, {} warning{}\n",
                    db.path().string(), report.accounts, report.transactions,
                    report.warnings.size(), report.warnings.size() == 1 ? "" : "s"));
  });
}

void add_backup(CLI::App& app, Context& ctx) {
  auto file = std::make_shared<std::string>();
  auto* cmd = app.add_subcommand("backup",
                                 "Copy the ledger to a new file, safely even while keel is in use");
  add_examples(*cmd, {"keel backup household-2025-12-31.db"});
  cmd->add_option("FILE", *file,
                  "The backup file to create (must not exist; '-': standard output, not a "
                  "terminal)")
      ->required();
  cmd->callback([&ctx, file] {
    auto db = ctx.open_ledger();
    store::backup_to(db, *file);
    const std::string line = fmt::format("backed up {} to {}\n", db.path().string(), *file);
    if (*file == "-")
      std::fputs(line.c_str(), stderr);
    else
      out(line);
  });
}

void add_restore(CLI::App& app, Context& ctx) {
  auto file = std::make_shared<std::string>();
  auto* cmd = app.add_subcommand(
      "restore", "Replace the ledger with a backup, after checking it; the old file is kept");
  add_examples(*cmd, {"keel restore household-2025-12-31.db"});
  cmd->add_option("FILE", *file, "The backup to restore")->required();
  cmd->callback([&ctx, file] {
    const auto result = ledger::restore_backup(ctx.ledger_path(), *file);
    for (const auto& stale : result.stale_removed)
      out(fmt::format("removed {}, left by an interrupted restore\n", stale.string()));
    out(fmt::format("restored {} from {} ({} transactions)\n", ctx.ledger_path().string(), *file,
                    result.transactions));
    if (result.replaced_kept_at)
      out(fmt::format("the ledger it replaced is kept at {}\n", result.replaced_kept_at->string()));
  });
}

}  // namespace

void register_maintenance_commands(CLI::App& app, Context& ctx) {
  add_verify(app, ctx);
  add_backup(app, ctx);
  add_restore(app, ctx);
}

}  // namespace keel::cli
