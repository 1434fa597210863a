// Commands that set the ledger against a broker's statement: reconcile, reopen.
#include <fmt/format.h>

#include <cstdio>
#include <memory>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/files.h"
#include "core/json.h"
#include "core/text.h"
#include "io/ofx.h"
#include "ledger/period.h"
#include "reconcile/reconcile.h"
#include "report/json_schema.h"
#include "report/table.h"

namespace keel::cli {
namespace {

struct ReconcileOptions {
  std::string file, date, mapping, account;
  bool json = false;
};

// The comparison as JSON (docs/schema/reconcile.json); the exit status is the
// same as the text form's: non-zero when anything differs.
std::string render_json(const reconcile::Result& r, const std::string& file) {
  std::string text;
  JsonWriter j(text);
  report::begin_document(j, "reconcile", 1).member("file", input_name(file));
  j.member("day", r.day.str()).member("accounts", r.accounts);
  j.member("items", static_cast<unsigned long long>(r.items));
  j.member("matched", !r.accounts.empty() && r.differences.empty());
  j.member("recorded", r.recorded ? std::optional<long long>(*r.recorded) : std::nullopt);
  j.key("differences").begin_array();
  for (const auto& d : r.differences) {
    j.begin_object().member("account", d.account).member("item", d.item);
    j.member("ledger", d.ledger).member("statement", d.statement);
    j.member("difference", d.statement - d.ledger).member("explanations", d.explanations);
    j.end_object();
  }
  j.end_array().end_object();
  return text + "\n";
}

std::string render(const reconcile::Result& r, const std::string& file) {
  std::string names;
  for (const auto& a : r.accounts) names += (names.empty() ? "" : ", ") + printable(a);
  std::string text = fmt::format("{} on {}: {} account{} ({}), {} figures compared\n",
                                 printable(file), r.day.str(), r.accounts.size(),
                                 r.accounts.size() == 1 ? "" : "s", names, r.items);
  if (r.differences.empty()) return text;
  text += "\n";
  for (const auto& d : r.differences) {
    text += fmt::format("{} {}: ledger {}, statement {}, difference {}\n", printable(d.account),
                        printable(d.item), d.ledger.str(), d.statement.str(),
                        (d.statement - d.ledger).str());
    if (d.explanations.empty()) text += "  - no explanation found\n";
    for (const auto& e : d.explanations) text += "  - " + e + "\n";
  }
  return text;
}

void add_reconcile(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ReconcileOptions>();
  auto* cmd = app.add_subcommand(
      "reconcile",
      "Compare the ledger with a broker's statement of positions and cash on a day; record a "
      "match and lock the period");
  add_examples(*cmd, {"keel reconcile positions.csv --date 2026-10-31 --map broker.toml",
                      "keel reconcile statement.ofx --account Taxable"});
  cmd->add_option("FILE", o->file,
                  "The statement: CSV (keel's layout, or another described by --map) or OFX "
                  "('-': standard input)")
      ->required();
  cmd->add_option("--date", o->date, "Day of a CSV statement, YYYY-MM-DD (an OFX file says it)");
  cmd->add_option("--map", o->mapping,
                  "TOML file describing a CSV statement's layout ('-': standard input)");
  cmd->add_option("--account", o->account, "OFX: the keel account the statement is for");
  add_json_flag(*cmd, o->json);
  cmd->callback([&ctx, o] {
    if (is_standard_input(o->file) && is_standard_input(o->mapping))
      throw InputError(
          "--map -: the statement is read from standard input already; give the "
          "mapping as a file");
    auto db = ctx.open_ledger(store::Access::write);
    reconcile::BrokerStatement st;
    if (io::is_ofx_file(o->file)) {
      if (!o->date.empty()) throw InputError("--date: an OFX statement gives its own day (DTASOF)");
      if (!o->mapping.empty()) throw InputError("--map: only for CSV statements");
      if (o->account.empty())
        throw InputError("--account: name the keel account the OFX statement is for");
      st =
          printing_refusals([&] { return reconcile::read_statement_ofx(db, o->file, o->account); });
    } else {
      if (!o->account.empty())
        throw InputError("--account: a CSV statement names its accounts on each row");
      if (o->date.empty())
        throw InputError("--date: a CSV statement needs its day, written YYYY-MM-DD");
      const Date day = date_value(o->date, "--date");
      std::optional<io::Mapping> mapping;
      if (!o->mapping.empty()) mapping = io::Mapping::load(o->mapping);
      st = printing_refusals(
          [&] { return reconcile::read_statement_csv(db, o->file, day, mapping); });
    }
    const auto r = reconcile::reconcile(db, st);
    out(o->json ? render_json(r, o->file) : render(r, o->file));
    std::fflush(stdout);  // the report before the error line, on a terminal and in a pipe
    if (r.accounts.empty())
      throw InputError(fmt::format("{}: names no account", printable(o->file)));
    if (!r.differences.empty())
      throw InputError(fmt::format(
          "{} difference{} between the ledger and {}; nothing was recorded", r.differences.size(),
          r.differences.size() == 1 ? "" : "s", printable(o->file)));
    if (o->json) return;
    out(
        fmt::format("matches: recorded as reconciliation {}; postings and voids dated on or "
                    "before {} are now refused in these accounts\n",
                    *r.recorded, r.day.str()));
  });
}

struct ReopenOptions {
  std::string account, from, reason;
};

void add_reopen(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ReopenOptions>();
  auto* cmd = app.add_subcommand(
      "reopen", "Reopen a reconciled period of an account so it can be corrected (recorded)");
  add_examples(*cmd, {"keel reopen --account Taxable --from 2026-10-01 --reason \"broker "
                      "restated a dividend\""});
  cmd->add_option("--account", o->account, "Account name")->required();
  cmd->add_option("--from", o->from, "First day to reopen, YYYY-MM-DD")->required();
  cmd->add_option("--reason", o->reason, "Why the period is reopened")->required();
  cmd->callback([&ctx, o] {
    const Date from = date_value(o->from, "--from");
    auto db = ctx.open_ledger(store::Access::write);
    const auto id = ledger::reopen(db, o->account, from, o->reason);
    out(fmt::format("reopened '{}' from {} (reopening {}); reconcile again to close it\n",
                    printable(o->account), from.str(), id));
  });
}

}  // namespace

void register_reconcile_commands(CLI::App& app, Context& ctx) {
  add_reconcile(app, ctx);
  add_reopen(app, ctx);
}

}  // namespace keel::cli
