#include "ledger/verify.h"

#include <fmt/format.h>

#include <algorithm>
#include <map>

#include "core/currency.h"
#include "core/error.h"
#include "core/text.h"
#include "ledger/actions.h"
#include "ledger/fx_cash.h"
#include "ledger/period.h"
#include "ledger/plausibility.h"
#include "ledger/posting.h"
#include "store/fx_store.h"
#include "store/ledger_store.h"
#include "store/maintenance.h"
#include "store/period_store.h"

namespace keel::ledger {
namespace {

struct Recount {
  std::map<std::int64_t, Decimal> cash;                             // by account
  std::map<std::pair<std::int64_t, std::string>, Decimal> foreign;  // (account, currency)
  std::map<std::pair<std::int64_t, std::int64_t>, Decimal> units;   // (account, security)
};

// Cash and units from the raw rows and corporate actions, without the lot engine.
Recount recount(const LedgerLog& log) {
  const auto voided = voided_ids(log.transactions);
  std::vector<const Transaction*> live;
  for (const auto& t : log.transactions)
    if (t.kind != TxnKind::void_entry && !voided.count(t.id)) live.push_back(&t);
  std::stable_sort(live.begin(), live.end(),
                   [](const Transaction* a, const Transaction* b) { return a->date < b->date; });
  std::vector<const Split*> splits;
  for (const auto& s : log.splits) splits.push_back(&s);
  std::stable_sort(splits.begin(), splits.end(),
                   [](const Split* a, const Split* b) { return a->date < b->date; });
  const auto actions = live_actions(log.actions);
  Recount r;
  std::size_t next_split = 0, next_action = 0;
  // Units of one security in every account that has a count of it.
  auto holdings = [&](std::int64_t security_id) {
    std::vector<std::pair<std::int64_t, Decimal*>> out;
    for (auto& [key, units] : r.units)
      if (key.second == security_id && units.is_positive()) out.emplace_back(key.first, &units);
    return out;
  };
  // Whole units kept; the fraction of what was received paid at the in-lieu price.
  auto in_lieu = [&](const CorporateAction& a, std::int64_t account, Decimal& units,
                     const Decimal& received) {
    if (!a.in_lieu) return;
    const Decimal fraction = received - received.truncated(0);
    units -= fraction;
    r.cash[account] += (fraction * *a.in_lieu).rounded(kCostPlaces);
  };
  auto apply_action = [&](const CorporateAction& a) {
    for (auto [account, units] : holdings(a.security_id)) {
      const Decimal held = *units;
      const Decimal cash = a.cash ? (held * *a.cash).rounded(kCostPlaces) : Decimal();
      switch (a.kind) {
        case ActionKind::split:
        case ActionKind::stock_dividend:
          *units = held * (a.kind == ActionKind::split ? *a.ratio : Decimal(1) + *a.ratio);
          in_lieu(a, account, *units, *units);
          break;
        case ActionKind::return_of_capital:
          r.cash[account] += cash;
          break;
        case ActionKind::delisting:
        case ActionKind::merger:
        case ActionKind::spinoff: {
          r.cash[account] += cash;
          if (a.kind != ActionKind::spinoff) *units = Decimal();
          if (a.ratio && a.target_id) {
            Decimal& target = r.units[{account, *a.target_id}];
            target += held * *a.ratio;
            in_lieu(a, account, target, held * *a.ratio);
          }
          break;
        }
        case ActionKind::void_entry:
          break;
      }
    }
  };
  auto apply_splits_through = [&](Date day) {
    for (;;) {
      const bool split = next_split < splits.size() && splits[next_split]->date <= day;
      const bool action = next_action < actions.size() && actions[next_action]->date <= day;
      if (split && (!action || splits[next_split]->date <= actions[next_action]->date)) {
        for (auto& [key, units] : r.units)
          if (key.second == splits[next_split]->security_id) units *= splits[next_split]->ratio;
        ++next_split;
      } else if (action) {
        apply_action(*actions[next_action++]);
      } else {
        break;
      }
    }
  };
  std::map<std::int64_t, std::string> own;
  for (const auto& a : log.accounts) own[a.id] = a.currency;
  for (const Transaction* t : live) {
    apply_splits_through(t->date);
    const std::string& account_currency = own[t->account_id];
    const std::string currency = t->currency.value_or(account_currency);
    // A row in another currency moves that currency's cash, unless a
    // settlement rate converts it into the account's.
    const bool settled = t->rate && t->kind != TxnKind::exchange;
    Decimal& cash = currency == account_currency || settled ? r.cash[t->account_id]
                                                            : r.foreign[{t->account_id, currency}];
    const Decimal gross = t->quantity && t->price ? *t->quantity * *t->price : Decimal();
    if (t->kind == TxnKind::exchange) {
      cash -= *t->amount + t->fee;
      const Decimal bought = exchanged(*t->amount, *t->rate, *t->to_currency);
      (*t->to_currency == account_currency ? r.cash[t->account_id]
                                           : r.foreign[{t->account_id, *t->to_currency}]) += bought;
      continue;
    }
    if (settled) {
      const Decimal local = t->kind == TxnKind::buy    ? gross + t->fee
                            : t->kind == TxnKind::sell ? gross - t->fee
                                                       : *t->amount;
      const Decimal moved = settle(local, *t->rate, account_currency);
      const bool in =
          t->kind == TxnKind::sell || t->kind == TxnKind::dividend || t->kind == TxnKind::interest;
      cash += in ? moved : -moved;
      if (t->kind == TxnKind::buy) r.units[{t->account_id, *t->security_id}] += *t->quantity;
      if (t->kind == TxnKind::sell) r.units[{t->account_id, *t->security_id}] -= *t->quantity;
      continue;
    }
    auto units = [&]() -> Decimal& { return r.units[{t->account_id, *t->security_id}]; };
    switch (t->kind) {
      case TxnKind::deposit:
      case TxnKind::dividend:
      case TxnKind::interest:
        cash += *t->amount;
        break;
      case TxnKind::withdrawal:
      case TxnKind::tax:
      case TxnKind::fee:
        cash -= *t->amount;
        break;
      case TxnKind::buy:
        cash -= gross + t->fee;
        units() += *t->quantity;
        break;
      case TxnKind::sell:
        cash += gross - t->fee;
        units() -= *t->quantity;
        break;
      case TxnKind::transfer_in:
        if (t->security_id) {
          units() += *t->quantity;
          cash -= t->fee;
        } else {
          cash += *t->amount;
        }
        break;
      case TxnKind::transfer_out:
        if (t->security_id) {
          units() -= *t->quantity;
          cash -= t->fee;
        } else {
          cash -= *t->amount;
        }
        break;
      case TxnKind::exchange:
      case TxnKind::void_entry:
        break;
    }
  }
  apply_splits_through(Date::from_ymd(9999, 12, 31));
  return r;
}

}  // namespace

Findings check_signs(const std::vector<RealizedPart>& realized, const std::vector<LotLine>& open) {
  Findings out;
  for (const auto& l : open)
    if (l.lot.cost.is_negative())
      out.problems.push_back(fmt::format("open lot {} of {} in '{}' has a cost of {}", l.lot.lot_id,
                                         printable(l.symbol), printable(l.account),
                                         l.lot.cost.str()));
  std::map<std::int64_t, Decimal> sale_proceeds;
  for (const auto& part : realized) sale_proceeds[part.sell_txn_id] += part.proceeds;
  for (const auto& part : realized) {
    if (part.cost.is_negative())
      out.problems.push_back(fmt::format("sell {}: the part taken from lot {} has a cost of {}",
                                         part.sell_txn_id, part.lot_id, part.cost.str()));
    if (part.proceeds.is_negative() && !sale_proceeds[part.sell_txn_id].is_negative())
      out.problems.push_back(fmt::format("sell {}: the part taken from lot {} has proceeds of {}",
                                         part.sell_txn_id, part.lot_id, part.proceeds.str()));
  }
  for (const auto& [id, proceeds] : sale_proceeds)
    if (proceeds.is_negative())
      out.warnings.push_back(
          fmt::format("sell {}: its fee is above its gross proceeds, so its proceeds are {}", id,
                      proceeds.str()));
  return out;
}

VerifyReport verify(store::Database& db) {
  VerifyReport report;
  report.problems = store::sqlite_problems(db);
  if (!report.problems.empty()) return report;  // nothing above a damaged file can be trusted
  const LedgerLog log = load_log(db);
  report.transactions = log.transactions.size();
  report.accounts = log.accounts.size();
  std::map<std::int64_t, std::string> symbols;
  for (const auto& s : store::list_securities(db)) symbols[s.id] = s.symbol;

  for (const auto& t : log.transactions)
    if (t.link_id) {
      const bool partner_ok =
          std::any_of(log.transactions.begin(), log.transactions.end(), [&](const Transaction& o) {
            return o.id == *t.link_id && o.kind == TxnKind::transfer_out;
          });
      if (!partner_ok)
        report.problems.push_back(
            fmt::format("transaction {} is the receiving half of transfer {}, which is missing",
                        t.id, *t.link_id));
    }
  std::vector<std::string> sign_warnings;
  try {
    const Book book = replay(log);
    const Recount counted = recount(log);
    std::vector<LotLine> open;
    for (const auto& account : log.accounts)
      for (const auto& [security_id, position] : book.account(account.id).positions)
        for (const auto& lot : position.lots)
          open.push_back(LotLine{account.name, symbols[security_id], lot});
    auto signs = check_signs(book.realized(), open);
    report.problems.insert(report.problems.end(), signs.problems.begin(), signs.problems.end());
    sign_warnings = std::move(signs.warnings);
    for (const auto& account : log.accounts) {
      const AccountBook& held = book.account(account.id);
      const auto cash_it = counted.cash.find(account.id);
      const Decimal cash = cash_it == counted.cash.end() ? Decimal() : cash_it->second;
      if (cash != held.cash)
        report.problems.push_back(
            fmt::format("cash of '{}': the rows add up to {}, the lots say {}",
                        printable(account.name), cash.str(), held.cash.str()));
      std::map<std::string, Decimal> foreign;
      for (const auto& [key, amount] : counted.foreign)
        if (key.first == account.id) foreign[key.second] += amount;
      for (const auto& [code, lots] : held.foreign_cash) foreign.try_emplace(code);
      for (const auto& [code, amount] : foreign)
        if (amount != held.foreign_balance(code))
          report.problems.push_back(
              fmt::format("cash in {} of '{}': the rows add up to {}, the lots say {}", code,
                          printable(account.name), amount.str(), held.foreign_balance(code).str()));
      for (const auto& [key, units] : counted.units) {
        if (key.first != account.id) continue;
        const auto pos = held.positions.find(key.second);
        const Decimal lots = pos == held.positions.end() ? Decimal() : pos->second.quantity();
        if (lots != units)
          report.problems.push_back(
              fmt::format("{} in '{}': the rows add up to {} units, the lots hold {}",
                          symbols[key.second], printable(account.name), units.str(), lots.str()));
      }
    }
  } catch (const InputError& e) {
    report.problems.push_back(std::string("replay: ") + e.what());
  }
  // Exchange rates: the table's checks hold the shape; the codes must be ISO 4217.
  for (const auto& r : store::list_fx_rates(db))
    for (const auto& code : {r.base, r.quote})
      if (!is_currency(code))
        report.problems.push_back(
            fmt::format("exchange rate {}/{} on {}: {} is not an ISO 4217 "
                        "currency code",
                        r.base, r.quote, r.date.str(), code));
  for (const auto& a : log.accounts)
    if (!is_currency(a.currency))
      report.problems.push_back(fmt::format("account '{}' keeps {}, not an ISO 4217 currency code",
                                            printable(a.name), a.currency));
  report.warnings = store::data_warnings(db);
  // Text that is not UTF-8 or names with invisible characters leave every
  // figure sound: worth a look (reports replace or mark them), not suspect.
  for (auto more :
       {store::future_rows(db, Date::today()), store::text_problems(db), store::name_warnings(db)})
    report.warnings.insert(report.warnings.end(), more.begin(), more.end());
  report.warnings.insert(report.warnings.end(), sign_warnings.begin(), sign_warnings.end());
  for (const auto& flag : plausibility_flags(db, log))
    report.warnings.push_back(
        flag.message + fmt::format(" (if it is right: keel confirm {} --reason ...)", flag.txn_id));
  const PeriodLocks locks = PeriodLocks::load(db);
  for (const auto& [account_id, day] : store::last_reconciled_days(db))
    for (const auto& a : log.accounts)
      if (a.id == account_id)
        report.reconciled.push_back({a.name, day, locks.locked_through(a.id)});
  return report;
}

}  // namespace keel::ledger
