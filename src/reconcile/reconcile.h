// Reconciliation: the ledger against a broker's statement on one day.
//
// Contract
//  - A statement is positions and cash per account on a day: a CSV file in
//    keel's layout (account, symbol, quantity[, cost_basis]; cash rows give
//    currency and cash instead of symbol and quantity), or another layout
//    described by a mapping, or the positions and cash balance (INVBAL
//    AVAILCASH) of an OFX investment statement. Reading one refuses unknown
//    accounts and securities with "did you mean", and bad rows with
//    FILE:LINE: column 'x' messages (InputError; nothing is recorded).
//  - compare() checks, for each account the statement names: units of every
//    security either side holds, cash in every currency either side names,
//    and cost basis where the statement gives it. Each difference carries the
//    explanations keel can find, each a sentence: a ledger transaction dated
//    after the statement day, a voided one, one the statement lists (OFX)
//    but the ledger lacks, a distribution in the market data that was not
//    booked, all of exactly the difference; for units, a split ratio that
//    turns the ledger's units into the statement's.
//  - reconcile() records a statement that matches (day, accounts, file name
//    and SHA-256); from then on the accounts are locked through that day
//    (ledger/period.h). A statement that differs records nothing.
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "core/date.h"
#include "core/decimal.h"
#include "io/mapping.h"
#include "io/ofx.h"
#include "store/database.h"

namespace keel::reconcile {

struct StatementLine {
  std::uint64_t line = 0;
  std::string account;
  std::optional<std::string> symbol;  // a position
  std::optional<Decimal> quantity;
  std::optional<Decimal> cost_basis;
  std::optional<std::string> currency;  // a cash line
  std::optional<Decimal> cash;
};

struct BrokerStatement {
  std::string file;
  std::string sha256;
  Date day;
  std::vector<StatementLine> lines;
  std::vector<io::OfxTransaction> listed;  // an OFX statement's own transactions
};

BrokerStatement read_statement_csv(store::Database& db, const std::filesystem::path& file, Date day,
                                   const std::optional<io::Mapping>& mapping);
// `account`: the keel account the OFX statement is for.
BrokerStatement read_statement_ofx(store::Database& db, const std::filesystem::path& file,
                                   const std::string& account);

struct Difference {
  std::string account;
  std::string item;  // "QRX units", "cash EUR", "QRX cost basis"
  Decimal ledger, statement;
  std::vector<std::string> explanations;
};

struct Result {
  Date day;
  std::vector<std::string> accounts;  // compared, by name
  std::size_t items = 0;              // figures compared
  std::vector<Difference> differences;
  std::optional<std::int64_t> recorded;  // reconciliation id when it matched
};

Result compare(store::Database& db, const BrokerStatement& statement);
// compare(), then record the match (if it is one) in one write transaction.
Result reconcile(store::Database& db, const BrokerStatement& statement);

}  // namespace keel::reconcile
