#include "rules/repurchase.h"

#include <fmt/format.h>

#include <map>
#include <set>

#include "ledger/posting.h"
#include "ledger/tax.h"

namespace keel::rules {

void flag_repurchases(store::Database& db, Proposal& proposal, int window_days) {
  ledger::check_repurchase_window(window_days);
  const LedgerLog log = ledger::load_log(db);
  const auto voided = voided_ids(log.transactions);
  std::map<std::int64_t, std::string> names;
  for (const auto& a : log.accounts) names[a.id] = a.name;
  const Date from = proposal.as_of.plus_days(-window_days);
  bool flagged = false;
  for (auto& order : proposal.plan.orders) {
    if (order.side != Side::sell || order.lots.empty()) continue;
    Decimal est_gain;
    std::set<std::int64_t> sold;
    for (const auto& lot : order.lots) {
      est_gain += lot.est_gain;
      sold.insert(lot.lot_id);
    }
    if (!est_gain.is_negative()) continue;
    std::string where;
    // The latest earlier buy is the nearest one.
    const Transaction* nearest = nullptr;
    for (const auto& t : log.transactions) {
      if (t.kind != TxnKind::buy || voided.count(t.id) || sold.count(t.id)) continue;
      if (t.security_id != order.security_id || t.date < from || t.date > proposal.as_of) continue;
      if (!nearest || t.date > nearest->date) nearest = &t;
    }
    if (nearest)
      where = fmt::format("bought on {} in {}", nearest->date.str(), names[nearest->account_id]);
    for (const auto& other : proposal.plan.orders)
      if (other.side == Side::buy && other.security_id == order.security_id)
        where = fmt::format("bought by this proposal in {}", other.account);
    if (where.empty()) continue;
    flagged = true;
    order.reason += fmt::format(
        "; sold at an estimated loss and {}, within {} days: the loss may be disallowed under "
        "local rules",
        where, window_days);
  }
  if (flagged)
    proposal.cautions.push_back(fmt::format(
        "Orders flagged with a repurchase within {} days may have their loss disallowed under "
        "local rules (such as the US wash-sale rule); tax treatment depends on local rules and a "
        "licensed professional.",
        window_days));
}

}  // namespace keel::rules
