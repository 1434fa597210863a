// Saved proposals: a rule's or a plan's orders as proposed on a day, kept so
// they can be set against what was traded afterwards.
//
// Contract
//  - save_proposal() writes the proposal and its orders inside the caller's
//    WriteTransaction and returns the new id. Rows are append-only (triggers).
//  - find_proposal() returns the proposal with its orders in proposed order,
//    or unset; list_proposals() gives every proposal without orders, oldest
//    first. Decimals are stored as canonical text.
//  - A plan's proposal (kind "plan") keeps the plan's text in the rule_*
//    fields, the accounts it covered, and each order's part.
//  - Either kind keeps the cash it planned with (proposal_cash), read back
//    in the order saved.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "model/records.h"
#include "store/database.h"

namespace keel::store {

struct ProposalOrderRow {
  std::int64_t account_id = 0;
  std::string account;  // filled on reading
  std::int64_t security_id = 0;
  std::string symbol;  // filled on reading
  std::string side;    // "buy" or "sell"
  Decimal quantity, price, value, fee, weight_now, weight_target;
  std::string reason;
  std::vector<LotPick> lots;
  std::string part;  // a plan's part; empty for a rule's proposal
};

// Cash a proposal planned with, not booked (--deposit, --withdraw).
struct ProposalCashRow {
  std::int64_t account_id = 0;
  std::string account;  // filled on reading
  Decimal amount;       // deposits above zero, withdrawals below
};

struct ProposalRow {
  std::int64_t id = 0;
  std::string kind = "rule";  // "rule" or "plan"
  Date as_of;
  std::string rule_name;
  std::string rule_file;
  std::string rule_text;
  std::string rule_sha256;
  Decimal pool_value;
  std::int64_t last_txn_id = 0;
  std::string saved_at;
  std::size_t order_count = 0;
  std::vector<std::int64_t> account_ids;  // a plan's accounts, by id; empty for a rule
  std::vector<ProposalOrderRow> orders;
  std::vector<ProposalCashRow> cash;  // planned, in the order given
};

std::int64_t save_proposal(Database& db, const ProposalRow& proposal);
std::optional<ProposalRow> find_proposal(Database& db, std::int64_t id);
std::vector<ProposalRow> list_proposals(Database& db);

}  // namespace keel::store
