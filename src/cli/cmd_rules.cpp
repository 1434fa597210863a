// keel propose, keel proposals: a rule's orders for a day, and saved proposals
// against what was traded since. Logic lives in src/rules/.
#include <fmt/format.h>

#include <charconv>
#include <memory>

#include "cli/context.h"
#include "cli/options.h"
#include "core/error.h"
#include "core/text.h"
#include "ledger/tax.h"
#include "report/proposal_forms.h"
#include "rules/plan.h"
#include "rules/plan_propose.h"
#include "rules/propose.h"
#include "rules/repurchase.h"

namespace keel::cli {
namespace {

struct ProposeOptions {
  std::string rule, plan, as_of, currency;
  std::vector<std::string> deposits, withdrawals;
  bool json = false;
  bool save = false;
  int repurchase_window = 0;
};

void add_propose(CLI::App& app, Context& ctx) {
  auto o = std::make_shared<ProposeOptions>();
  auto* cmd = app.add_subcommand(
      "propose", "A rule's orders for a day: the screen, the orders and the result");
  add_examples(*cmd, {"keel propose --rule rule.toml --as-of 2025-12-31",
                      "keel propose --plan plan.toml --deposit Savings=1500"});
  auto* rule_opt = cmd->add_option("--rule", o->rule,
                                   "Rule file (TOML; see docs/rules.md; '-': standard input)");
  auto* plan_opt = cmd->add_option(
      "--plan", o->plan,
      "Plan file: several rules and fixed sleeves proposed together (TOML; see docs/plan.md)");
  rule_opt->excludes(plan_opt);
  cmd->add_option("--deposit", o->deposits,
                  "Cash to plan with that is not booked yet, ACCOUNT=AMOUNT in that account's "
                  "currency (repeatable)");
  cmd->add_option("--withdraw", o->withdrawals,
                  "Cash to take out that is not booked yet, ACCOUNT=AMOUNT in that account's "
                  "currency (repeatable)");
  cmd->add_option("--as-of", o->as_of,
                  "Day to propose for, YYYY-MM-DD (default: the latest day with a close)");
  cmd->add_option("--currency", o->currency,
                  "Value the pool and size the orders in this currency, a three-letter code "
                  "(default: a rule's first account's; each pool of a plan its accounts' "
                  "currency, or the ledger's when they keep several)");
  add_json_flag(*cmd, o->json);
  cmd->add_flag("--save", o->save, "Keep the proposal, to compare with what is traded later");
  auto* window =
      cmd->add_option("--repurchase-window", o->repurchase_window,
                      "Flag each sell at an estimated loss when the security was bought, in any "
                      "account, this many days before, or is bought by the proposal (off unless "
                      "given)");
  cmd->callback([&ctx, o, window] {
    const auto as_of = date_option(o->as_of, "--as-of");
    if (o->rule.empty() && o->plan.empty())
      throw InputError("propose: give a rule (--rule FILE) or a plan (--plan FILE)");
    std::vector<rules::PlannedCash> planned;
    for (const auto& d : o->deposits) planned.push_back(rules::parse_planned_cash("--deposit", d));
    for (const auto& w : o->withdrawals)
      planned.push_back(rules::parse_planned_cash("--withdraw", w));
    const auto currency = currency_option(o->currency);
    if (!o->plan.empty()) {
      if (window->count() > 0) throw InputError("--repurchase-window: applies only with --rule");
      const auto plan = rules::load_plan(o->plan);
      auto db = ctx.open_ledger(o->save ? store::Access::write : store::Access::read);
      const auto proposal = with_currency_option(currency, [&] {
        return rules::propose_plan(db, plan, as_of, std::move(planned), currency);
      });
      std::optional<std::int64_t> id;
      if (o->save) id = rules::save_plan(db, plan, proposal);
      out(o->json ? report::plan_proposal_json(proposal, id)
                  : report::plan_proposal_text(proposal, ctx.style()));
      if (id && !o->json)
        out(fmt::format("\nSaved as proposal {}; see 'keel proposals show {}'.\n", *id, *id));
      return;
    }
    if (window->count() > 0) ledger::check_repurchase_window(o->repurchase_window);
    const auto rule = rules::load_rule(o->rule);
    auto db = ctx.open_ledger(o->save ? store::Access::write : store::Access::read);
    auto proposal = with_currency_option(
        currency, [&] { return rules::propose(db, rule, as_of, std::move(planned), currency); });
    if (window->count() > 0) rules::flag_repurchases(db, proposal, o->repurchase_window);
    std::optional<std::int64_t> id;
    if (o->save) id = rules::save(db, rule, proposal);
    if (o->json) {
      out(report::proposal_json(proposal, id));
      return;
    }
    out(report::proposal_text(proposal, ctx.style()));
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
    out(lo->json ? report::proposals_list_json(all)
                 : report::proposals_list_text(all, ctx.style()));
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
    out(so->json ? report::review_json(r) : report::review_text(r, ctx.style()));
  });
}

}  // namespace

void register_rules_commands(CLI::App& app, Context& context) {
  add_propose(app, context);
  add_proposals(app, context);
}

}  // namespace keel::cli
