-- keel schema, version 2: saved proposals of a rule.
--
-- A proposal keeps the rule exactly as it was read (text and SHA-256), the
-- day it used, and the orders it proposed, so that what was proposed can be
-- set against what was traded afterwards. Proposals are records: never
-- changed, never deleted.

CREATE TABLE proposal (
  id           INTEGER PRIMARY KEY,
  as_of        TEXT NOT NULL CHECK (as_of GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  rule_name    TEXT NOT NULL CHECK (length(rule_name) BETWEEN 1 AND 200),
  rule_file    TEXT NOT NULL,
  rule_text    TEXT NOT NULL,
  rule_sha256  TEXT NOT NULL CHECK (length(rule_sha256) = 64),
  pool_value   TEXT NOT NULL,
  -- Highest transaction id in the ledger when the proposal was saved: trades
  -- "since" the proposal are the ones with a larger id.
  last_txn_id  INTEGER NOT NULL CHECK (last_txn_id >= 0),
  saved_at     TEXT NOT NULL
) STRICT;

CREATE TABLE proposal_order (
  proposal_id   INTEGER NOT NULL REFERENCES proposal (id),
  seq           INTEGER NOT NULL CHECK (seq >= 1),
  account_id    INTEGER NOT NULL REFERENCES account (id),
  security_id   INTEGER NOT NULL REFERENCES security (id),
  side          TEXT NOT NULL CHECK (side IN ('buy', 'sell')),
  quantity      TEXT NOT NULL CHECK (quantity GLOB '[0-9]*' AND quantity <> '0'),
  price         TEXT NOT NULL CHECK (price GLOB '[0-9]*'),
  value         TEXT NOT NULL CHECK (value GLOB '[0-9]*'),
  fee           TEXT NOT NULL CHECK (fee GLOB '[0-9]*'),
  weight_now    TEXT NOT NULL,
  weight_target TEXT NOT NULL,
  reason        TEXT NOT NULL,
  lots          TEXT,      -- lots a sell would take: "lotid:qty,lotid:qty"
  PRIMARY KEY (proposal_id, seq)
) STRICT, WITHOUT ROWID;

CREATE TRIGGER proposal_is_append_only_update BEFORE UPDATE ON proposal
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be changed');
END;

CREATE TRIGGER proposal_is_append_only_delete BEFORE DELETE ON proposal
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be deleted');
END;

CREATE TRIGGER proposal_order_is_append_only_update BEFORE UPDATE ON proposal_order
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be changed');
END;

CREATE TRIGGER proposal_order_is_append_only_delete BEFORE DELETE ON proposal_order
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be deleted');
END;
