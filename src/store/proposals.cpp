#include "store/proposals.h"

#include <SQLiteCpp/Statement.h>

#include "core/text.h"
#include "store/ledger_store.h"

namespace keel::store {

std::int64_t save_proposal(Database& db, const ProposalRow& p) {
  SQLite::Statement st(
      db.sql(),
      "INSERT INTO proposal (as_of, rule_name, rule_file, rule_text, rule_sha256, "
      "pool_value, last_txn_id, saved_at, kind) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)");
  st.bind(1, p.as_of.str());
  st.bind(2, p.rule_name);
  st.bind(3, printable(p.rule_file));  // a path may hold any bytes; keep UTF-8 text
  st.bind(4, p.rule_text);
  st.bind(5, p.rule_sha256);
  st.bind(6, p.pool_value.str());
  st.bind(7, p.last_txn_id);
  st.bind(8, utc_timestamp());
  st.bind(9, p.kind);
  st.exec();
  const std::int64_t id = db.sql().getLastInsertRowid();
  SQLite::Statement acc(db.sql(),
                        "INSERT INTO proposal_account (proposal_id, account_id) VALUES (?, ?)");
  for (const std::int64_t a : p.account_ids) {
    acc.reset();
    acc.bind(1, id);
    acc.bind(2, a);
    acc.exec();
  }
  SQLite::Statement cash(
      db.sql(),
      "INSERT INTO proposal_cash (proposal_id, seq, account_id, amount) VALUES (?, ?, ?, ?)");
  int cash_seq = 0;
  for (const auto& c : p.cash) {
    cash.reset();
    cash.bind(1, id);
    cash.bind(2, ++cash_seq);
    cash.bind(3, c.account_id);
    cash.bind(4, c.amount.str());
    cash.exec();
  }
  SQLite::Statement ins(db.sql(),
                        "INSERT INTO proposal_order (proposal_id, seq, account_id, security_id, "
                        "side, quantity, price, value, fee, weight_now, weight_target, reason, "
                        "lots, part) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)");
  int seq = 0;
  for (const auto& o : p.orders) {
    ins.reset();
    ins.bind(1, id);
    ins.bind(2, ++seq);
    ins.bind(3, o.account_id);
    ins.bind(4, o.security_id);
    ins.bind(5, o.side);
    ins.bind(6, o.quantity.str());
    ins.bind(7, o.price.str());
    ins.bind(8, o.value.str());
    ins.bind(9, o.fee.str());
    ins.bind(10, o.weight_now.str());
    ins.bind(11, o.weight_target.str());
    ins.bind(12, o.reason);
    if (o.lots.empty())
      ins.bind(13);
    else
      ins.bind(13, format_lot_picks(o.lots));
    if (o.part.empty())
      ins.bind(14);
    else
      ins.bind(14, o.part);
    ins.exec();
  }
  return id;
}

namespace {
constexpr const char* kColumns =
    "p.id, p.as_of, p.rule_name, p.rule_file, p.rule_text, p.rule_sha256, p.pool_value, "
    "p.last_txn_id, p.saved_at, (SELECT count(*) FROM proposal_order o WHERE o.proposal_id = "
    "p.id), "
    "p.kind";

ProposalRow read_row(SQLite::Statement& st) {
  ProposalRow p;
  p.id = st.getColumn(0).getInt64();
  p.as_of = Date::parse(st.getColumn(1).getString());
  p.rule_name = st.getColumn(2).getString();
  p.rule_file = st.getColumn(3).getString();
  p.rule_text = st.getColumn(4).getString();
  p.rule_sha256 = st.getColumn(5).getString();
  p.pool_value = Decimal::parse(st.getColumn(6).getString());
  p.last_txn_id = st.getColumn(7).getInt64();
  p.saved_at = st.getColumn(8).getString();
  p.order_count = static_cast<std::size_t>(st.getColumn(9).getInt64());
  p.kind = st.getColumn(10).getString();
  return p;
}
}  // namespace

std::optional<ProposalRow> find_proposal(Database& db, std::int64_t id) {
  SQLite::Statement st(db.sql(),
                       std::string("SELECT ") + kColumns + " FROM proposal p WHERE id = ?");
  st.bind(1, id);
  if (!st.executeStep()) return std::nullopt;
  ProposalRow p = read_row(st);
  SQLite::Statement o(db.sql(),
                      "SELECT o.account_id, a.name, o.security_id, s.symbol, o.side, o.quantity, "
                      "o.price, o.value, o.fee, o.weight_now, o.weight_target, o.reason, o.lots, "
                      "o.part "
                      "FROM proposal_order o JOIN account a ON a.id = o.account_id "
                      "JOIN security s ON s.id = o.security_id WHERE o.proposal_id = ? "
                      "ORDER BY o.seq");
  o.bind(1, id);
  while (o.executeStep()) {
    ProposalOrderRow r;
    r.account_id = o.getColumn(0).getInt64();
    r.account = o.getColumn(1).getString();
    r.security_id = o.getColumn(2).getInt64();
    r.symbol = o.getColumn(3).getString();
    r.side = o.getColumn(4).getString();
    r.quantity = Decimal::parse(o.getColumn(5).getString());
    r.price = Decimal::parse(o.getColumn(6).getString());
    r.value = Decimal::parse(o.getColumn(7).getString());
    r.fee = Decimal::parse(o.getColumn(8).getString());
    r.weight_now = Decimal::parse(o.getColumn(9).getString());
    r.weight_target = Decimal::parse(o.getColumn(10).getString());
    r.reason = o.getColumn(11).getString();
    if (!o.getColumn(12).isNull()) r.lots = parse_lot_picks(o.getColumn(12).getString());
    if (!o.getColumn(13).isNull()) r.part = o.getColumn(13).getString();
    p.orders.push_back(std::move(r));
  }
  SQLite::Statement acc(
      db.sql(),
      "SELECT account_id FROM proposal_account WHERE proposal_id = ? ORDER BY account_id");
  acc.bind(1, id);
  while (acc.executeStep()) p.account_ids.push_back(acc.getColumn(0).getInt64());
  SQLite::Statement cash(db.sql(),
                         "SELECT c.account_id, a.name, c.amount FROM proposal_cash c "
                         "JOIN account a ON a.id = c.account_id WHERE c.proposal_id = ? "
                         "ORDER BY c.seq");
  cash.bind(1, id);
  while (cash.executeStep())
    p.cash.push_back(ProposalCashRow{cash.getColumn(0).getInt64(), cash.getColumn(1).getString(),
                                     Decimal::parse(cash.getColumn(2).getString())});
  return p;
}

std::vector<ProposalRow> list_proposals(Database& db) {
  SQLite::Statement st(db.sql(),
                       std::string("SELECT ") + kColumns + " FROM proposal p ORDER BY id");
  std::vector<ProposalRow> out;
  while (st.executeStep()) out.push_back(read_row(st));
  return out;
}

}  // namespace keel::store
