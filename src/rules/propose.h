// Proposals: the rule engine (rules/engine.h) fed from the ledger as it stood
// on an as-of day, and saved proposals set against what was traded since.
//
// Contract
//  - propose() uses only what was knowable on the as-of day: positions and
//    cash replayed to that day; closes on or before it (else a position's
//    last trade price, which is never traded on; and the trade price when
//    the ledger traded it after its latest close, with a note); metric
//    figures with known_on <= as-of (market/view.h). The default as-of is
//    the later of the latest day with a close and the latest transaction in
//    the rule's accounts, so orders already filled are not proposed again; a
//    given as-of with transactions after it gets a note saying so. It reads
//    the ledger and writes nothing.
//  - Across currencies: the pool is valued in `currency` (by default the
//    first account's): foreign holdings, foreign cash and accounts in other
//    currencies are converted at the as-of day's rates (rules/fx_orders.h);
//    names in other currencies are screened and quoted through
//    rules::Inputs with Convert::yes, so one without a rate on the day is
//    left out with the pair and the day. Targets and order values are in
//    `currency`; each order of a foreign name carries its local price, the
//    rate and how it settles (Order::Fx), and the conversions the orders
//    need are listed with their estimated fees.
//  - Problems of the rule meeting this ledger are InputErrors located at the
//    rule key (Rule::fail): an account it does not hold, and whatever rules::Inputs refuses
//    (rules/inputs.h), in the words the back-test and the signal check use
//    too. A day on which the rule selects nothing (too few names, no spread,
//    nothing selected, weights that cannot add up) is refused with the
//    engine's reason: a proposal always has targets.
//  - save() stores a proposal in one write transaction and returns its id.
//  - propose() plans with `planned` cash (rules/planned_cash.h): moved in
//    the accounts' cash before the orders, never booked; a withdrawal beyond
//    the cash is raised by selling in its account, netted with the rebalance.
//  - save() keeps the planned cash too.
//  - review() matches a saved proposal's orders with the live buys and sells
//    posted after it was saved in the rule's (or the plan's) accounts, by
//    account, security and side; trades that were not proposed are listed too.
//    Its planned cash is set against the deposits (withdrawals) booked since
//    in the same account.
#pragma once

#include <cstdint>
#include <functional>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <vector>

#include "core/date.h"
#include "ledger/book.h"
#include "ledger/posting.h"
#include "market/day_view.h"
#include "model/records.h"
#include "model/security.h"
#include "rules/engine.h"
#include "rules/fx_orders.h"
#include "rules/planned_cash.h"
#include "rules/rule.h"
#include "store/database.h"
#include "store/proposals.h"

namespace keel::rules {

struct Proposal {
  Date as_of;
  std::string rule_name;
  std::string rule_sha256;
  std::vector<std::string> accounts;
  std::string currency;    // what the pool, targets and order values are in
  bool converted = false;  // some amount or price was converted into it
  std::vector<Conversion> conversions;
  ScreenResult screen;
  std::vector<Target> targets;
  OrderPlan plan;
  std::vector<PlannedCash> planned;   // with the account filled in
  std::vector<std::string> notes;     // about the data used (stale closes, trade prices)
  std::vector<std::string> cautions;  // always shown
  std::int64_t last_txn_id = 0;
};

// `planned`: cash planned with and never booked (rules/planned_cash.h);
// `currency`: what the proposal is valued in (default: the first account's).
Proposal propose(store::Database& db, const Rule& rule, std::optional<Date> as_of = std::nullopt,
                 std::vector<PlannedCash> planned = {},
                 std::optional<std::string> currency = std::nullopt);

// The steps propose() shares with plan proposals (rules/plan_propose.h).
// The named accounts; `fail` (which must throw) gets why one is missing.
std::vector<Account> pool_accounts(store::Database& db, const std::vector<std::string>& names,
                                   const std::function<void(const std::string&)>& fail);
// The given day, or by default the later of the latest close and the latest
// transaction in the accounts; the notes say why, in `whose` words.
Date choose_as_of(const market::DayView& view, const LedgerLog& log,
                  const std::vector<Account>& pool, std::optional<Date> as_of,
                  std::string_view whose, std::vector<std::string>& notes);
// The cautions every proposal ends with.
std::vector<std::string> proposal_cautions(Date as_of);

std::int64_t save(store::Database& db, const Rule& rule, const Proposal& proposal);
// An order as a saved proposal keeps it.
store::ProposalOrderRow proposal_order_row(const Order& order);
// Planned cash as a saved proposal keeps it.
std::vector<store::ProposalCashRow> proposal_cash_rows(store::Database& db,
                                                       const std::vector<PlannedCash>& planned);

struct ReviewLine {
  std::string part;  // a plan's part ("" for a rule's proposal and for trades not proposed)
  std::string account;
  std::string symbol;
  std::string side;
  Decimal proposed;  // 0 for a trade that was not proposed
  Decimal est_price;
  Decimal traded;
  std::optional<Decimal> avg_price;  // of the trades, 4 places
  std::string status;  // "done", "partly", "more than proposed", "not traded", "not proposed"
};

// A saved proposal's planned cash against the deposits (or withdrawals) booked
// in its account since it was saved.
struct CashLine {
  std::string account;
  Decimal planned;     // deposits above zero, withdrawals below
  Decimal booked;      // same sign as planned
  std::string status;  // "booked", "partly", "more than planned", "not booked"
};

struct Review {
  store::ProposalRow proposal;
  std::vector<ReviewLine> lines;
  std::vector<CashLine> cash;
};

Review review(store::Database& db, std::int64_t proposal_id);

}  // namespace keel::rules
