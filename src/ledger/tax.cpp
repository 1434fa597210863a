#include "ledger/tax.h"

#include <fmt/format.h>

#include <algorithm>
#include <set>
#include <stdexcept>

#include "core/error.h"
#include "core/text.h"
#include "ledger/accounts.h"
#include "ledger/fx_cash.h"
#include "ledger/posting.h"
#include "market/day_view.h"
#include "store/ledger_store.h"

namespace keel::ledger {

TaxStatuses TaxStatuses::load(store::Database& db) {
  return TaxStatuses(store::list_tax_statuses(db));
}

TaxStatuses::TaxStatuses(std::vector<TaxStatusChange> changes) : changes_(std::move(changes)) {
  std::sort(changes_.begin(), changes_.end(), [](const auto& a, const auto& b) {
    return a.account_id != b.account_id ? a.account_id < b.account_id : a.from < b.from;
  });
}

TaxStatus TaxStatuses::on(std::int64_t account_id, Date day) const {
  TaxStatus status = TaxStatus::taxable;
  for (const auto& c : changes_)
    if (c.account_id == account_id && c.from <= day) status = c.status;
  return status;
}

bool TaxStatuses::taxable_throughout(std::int64_t account_id, Date from, Date to) const {
  if (on(account_id, from) != TaxStatus::taxable) return false;
  return std::none_of(changes_.begin(), changes_.end(), [&](const TaxStatusChange& c) {
    return c.account_id == account_id && c.from > from && c.from <= to &&
           c.status != TaxStatus::taxable;
  });
}

Date since_opening() {
  return Date::from_ymd(1, 1, 1);
}

void set_tax_status(store::Database& db, std::string_view account, TaxStatus status, Date from) {
  const Account a = store::account_named(db, account);
  const TaxStatus now = TaxStatuses::load(db).on(a.id, from);
  if (now == status)
    throw InputError(fmt::format("account '{}' is already {} on {}; nothing to change",
                                 printable(a.name), to_string(status), from.str()));
  store::insert_tax_status(db, {a.id, from, status});
}

void check_repurchase_window(int window_days) {
  if (window_days < 1)
    throw InputError(
        fmt::format("--repurchase-window: '{}' days; give 1 or more (the window is "
                    "off unless given)",
                    window_days));
}

void flag_repurchases(store::Database& db, std::vector<GainLine>& gains, int window_days) {
  check_repurchase_window(window_days);
  const LedgerLog log = load_log(db);
  const auto voided = voided_ids(log.transactions);
  std::map<std::int64_t, std::string> names;
  for (const auto& a : log.accounts) names[a.id] = a.name;
  // Lots closed by each sale: their buys are what was sold, not a repurchase.
  std::map<std::int64_t, std::set<std::int64_t>> sold_lots;
  for (const auto& g : gains) sold_lots[g.part.sell_txn_id].insert(g.part.lot_id);
  std::vector<const Transaction*> buys;
  for (const auto& t : log.transactions)
    if (t.kind == TxnKind::buy && !voided.count(t.id)) buys.push_back(&t);
  std::sort(buys.begin(), buys.end(), [](const Transaction* a, const Transaction* b) {
    return a->date != b->date ? a->date < b->date : a->id < b->id;
  });
  for (auto& g : gains) {
    if (!g.part.gain().is_negative()) continue;
    const auto& sold = sold_lots[g.part.sell_txn_id];
    for (const Transaction* b : buys) {
      if (*b->security_id != g.part.security_id || sold.count(b->id)) continue;
      const int apart = b->date - g.part.disposed;
      if (apart < -window_days || apart > window_days) continue;
      g.repurchase = Repurchase{b->id, names[b->account_id], b->date};
      break;
    }
  }
}

Withholding withholding(store::Database& db, int year, const std::optional<std::string>& account) {
  std::optional<std::int64_t> only;
  if (account) only = store::account_named(db, *account).id;
  return withholding_of(load_log(db), market::DayView(db), TaxStatuses::load(db), year, only);
}

Withholding withholding_of(const LedgerLog& log, const market::View& view,
                           const TaxStatuses& statuses, int year, std::optional<std::int64_t> only,
                           const std::optional<std::string>& currency) {
  const auto voided = voided_ids(log.transactions);
  std::map<std::int64_t, WithholdingBySecurity> by_id;
  std::vector<Account> involved;
  Withholding out;
  auto currency_of = [&](std::int64_t account_id) -> const std::string& {
    for (const auto& a : log.accounts)
      if (a.id == account_id) return a.currency;
    throw std::logic_error("withholding: a row of an account the log does not hold");
  };
  for (const auto& t : log.transactions) {
    if (voided.count(t.id) || t.date.year() != year || (only && t.account_id != *only)) continue;
    const bool income = t.kind == TxnKind::dividend || t.kind == TxnKind::interest;
    if (t.kind != TxnKind::tax && !income) continue;
    for (const auto& a : log.accounts)
      if (a.id == t.account_id && std::none_of(involved.begin(), involved.end(),
                                               [&](const Account& x) { return x.id == a.id; }))
        involved.push_back(a);
    // In the account's currency, as the lot engine booked the row.
    const std::string& own = currency_of(t.account_id);
    Decimal amount =
        booked_amount(*t.amount, t.currency.value_or(own), t.rate, own, t.date, view).amount;
    if (currency && *currency != own) amount = view.convert(amount, own, *currency, t.date);
    if (statuses.on(t.account_id, t.date) != TaxStatus::taxable) {
      if (t.kind == TxnKind::tax) out.not_taxable += amount;
      continue;
    }
    const std::int64_t key = t.security_id.value_or(0);
    auto& line = by_id[key];
    if (t.security_id) {
      const Security& security = known_security(view, key);
      line.symbol = security.symbol;
      line.country = security.country;
    }
    (income ? line.income : line.withheld) += amount;
  }
  if (!currency) one_currency(involved, "withholding");
  for (auto& [id, line] : by_id) {
    if (line.withheld.is_zero()) continue;
    out.by_country[line.country.value_or("")] += line.withheld;
    out.total += line.withheld;
    out.by_security.push_back(std::move(line));
  }
  std::sort(out.by_security.begin(), out.by_security.end(),
            [](const auto& a, const auto& b) { return a.symbol < b.symbol; });
  return out;
}

}  // namespace keel::ledger
