-- keel schema, version 10: the planned cash of a saved proposal.
--
-- A proposal made with --deposit or --withdraw planned with cash that was not
-- booked; it keeps each planned amount under its account (deposits above
-- zero, withdrawals below, at most two decimals as canonical text), in the
-- order given, so 'keel proposals show' can set them against what was booked
-- since. Append-only, like the proposal it belongs to.

CREATE TABLE proposal_cash (
  proposal_id INTEGER NOT NULL REFERENCES proposal (id),
  seq         INTEGER NOT NULL CHECK (seq >= 1),
  account_id  INTEGER NOT NULL REFERENCES account (id),
  amount      TEXT    NOT NULL CHECK (amount <> '0' AND length(amount) BETWEEN 1 AND 64),
  PRIMARY KEY (proposal_id, seq)
) STRICT, WITHOUT ROWID;

CREATE TRIGGER proposal_cash_is_append_only_update BEFORE UPDATE ON proposal_cash
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be changed');
END;

CREATE TRIGGER proposal_cash_is_append_only_delete BEFORE DELETE ON proposal_cash
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be deleted');
END;
