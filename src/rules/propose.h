// Proposals: the rule engine (rules/engine.h) fed from the ledger as it stood
// on an as-of day, and saved proposals set against what was traded since.
//
// Contract
//  - propose() uses only what was knowable on the as-of day: positions and
//    cash replayed to that day; closes on or before it (else a position's
//    last trade price, which is never traded on; and the trade price when
//    the ledger traded it after its latest close, with a note); metric
//    figures with known_on <= as-of (store::metric_as_of). The default as-of
//    is the later of the latest day with a close and the latest transaction
//    in the rule's accounts, so orders already filled are not proposed
//    again; a given as-of with transactions after it gets a note saying so.
//    It reads the ledger and writes nothing.
//  - Problems of the rule meeting this ledger (an account, symbol, sector or
//    metric it does not hold; too few names; nothing selected; weights that
//    cannot add up) are InputErrors located at the rule key (Rule::fail).
//  - save() stores a proposal in one write transaction and returns its id.
//  - review() matches a saved proposal's orders with the live buys and sells
//    posted after it was saved in the rule's accounts, by account, security
//    and side; trades that were not proposed are listed too.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "model/security.h"
#include "rules/engine.h"
#include "rules/rule.h"
#include "store/database.h"
#include "store/proposals.h"

namespace keel::rules {

struct Proposal {
  Date as_of;
  std::string rule_name;
  std::string rule_sha256;
  std::vector<std::string> accounts;
  ScreenResult screen;
  std::vector<Target> targets;
  OrderPlan plan;
  std::vector<std::string> notes;     // about the data used (stale closes, trade prices)
  std::vector<std::string> cautions;  // always shown
  std::int64_t last_txn_id = 0;
};

Proposal propose(store::Database& db, const Rule& rule, std::optional<Date> as_of = std::nullopt);

// A rule trades in one currency (keel does not convert between currencies
// yet): a sleeve or a listed symbol priced in another than `currency` is
// refused at its key; stocks of the whole ledger or of a sector priced in
// another are left out of `universe`, and the note returned says how many.
std::optional<std::string> keep_currency(const Rule& rule, const std::string& currency,
                                         const std::vector<const Security*>& sleeves,
                                         std::vector<const Security*>& universe);

// The cautions every proposal ends with.
std::vector<std::string> proposal_cautions(Date as_of);

std::int64_t save(store::Database& db, const Rule& rule, const Proposal& proposal);

struct ReviewLine {
  std::string account;
  std::string symbol;
  std::string side;
  Decimal proposed;  // 0 for a trade that was not proposed
  Decimal est_price;
  Decimal traded;
  std::optional<Decimal> avg_price;  // of the trades, 4 places
  std::string status;  // "done", "partly", "more than proposed", "not traded", "not proposed"
};

struct Review {
  store::ProposalRow proposal;
  std::vector<ReviewLine> lines;
};

Review review(store::Database& db, std::int64_t proposal_id);

}  // namespace keel::rules
