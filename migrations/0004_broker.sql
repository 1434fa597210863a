-- keel schema: broker imports, corrections and reconciliation.
--
-- Every table here is a record: rows are never changed or deleted.

-- Which rows an import run wrote: the rows it added, the voids and the
-- replacement rows of corrections.
CREATE TABLE import_txn (
  run_id INTEGER NOT NULL REFERENCES import_run (id),
  txn_id INTEGER NOT NULL UNIQUE REFERENCES txn (id),
  role   TEXT NOT NULL CHECK (role IN ('added', 'void', 'correction')),
  PRIMARY KEY (run_id, txn_id)
) STRICT, WITHOUT ROWID;

-- A booked row replaced by a corrected one. The replacement carries no ref
-- of its own in txn (a ref is unique per account and the voided row keeps
-- it); its reference is the one stored here.
CREATE TABLE correction (
  new_txn_id    INTEGER PRIMARY KEY REFERENCES txn (id),
  voided_txn_id INTEGER NOT NULL UNIQUE REFERENCES txn (id),
  ref           TEXT NOT NULL,
  run_id        INTEGER NOT NULL REFERENCES import_run (id)
) STRICT;

CREATE INDEX correction_by_ref ON correction (ref);

-- A statement that matched the ledger: the day, the file and its SHA-256.
CREATE TABLE reconciliation (
  id          INTEGER PRIMARY KEY,
  day         TEXT NOT NULL CHECK (day GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  file_name   TEXT NOT NULL,
  file_sha256 TEXT NOT NULL CHECK (length(file_sha256) = 64),
  recorded_at TEXT NOT NULL
) STRICT;

CREATE TABLE reconciled_account (
  reconciliation_id INTEGER NOT NULL REFERENCES reconciliation (id),
  account_id        INTEGER NOT NULL REFERENCES account (id),
  PRIMARY KEY (reconciliation_id, account_id)
) STRICT, WITHOUT ROWID;

-- An explicit reopening of an account's period from `from_day` on: postings
-- and voids dated on or after it are allowed again until the next match.
-- `after_reconciliation` (the highest reconciliation id when it was made, 0
-- for none) places it among the reconciliations.
CREATE TABLE period_reopening (
  id                   INTEGER PRIMARY KEY,
  account_id           INTEGER NOT NULL REFERENCES account (id),
  after_reconciliation INTEGER NOT NULL CHECK (after_reconciliation >= 0),
  from_day             TEXT NOT NULL
                       CHECK (from_day GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  reason               TEXT NOT NULL CHECK (length(reason) BETWEEN 1 AND 4000),
  recorded_at          TEXT NOT NULL
) STRICT;

CREATE TRIGGER import_txn_is_append_only_update BEFORE UPDATE ON import_txn
BEGIN SELECT RAISE(ABORT, 'import records cannot be changed'); END;
CREATE TRIGGER import_txn_is_append_only_delete BEFORE DELETE ON import_txn
BEGIN SELECT RAISE(ABORT, 'import records cannot be deleted'); END;
CREATE TRIGGER correction_is_append_only_update BEFORE UPDATE ON correction
BEGIN SELECT RAISE(ABORT, 'corrections cannot be changed'); END;
CREATE TRIGGER correction_is_append_only_delete BEFORE DELETE ON correction
BEGIN SELECT RAISE(ABORT, 'corrections cannot be deleted'); END;
CREATE TRIGGER reconciliation_is_append_only_update BEFORE UPDATE ON reconciliation
BEGIN SELECT RAISE(ABORT, 'reconciliations cannot be changed'); END;
CREATE TRIGGER reconciliation_is_append_only_delete BEFORE DELETE ON reconciliation
BEGIN SELECT RAISE(ABORT, 'reconciliations cannot be deleted'); END;
CREATE TRIGGER reconciled_account_is_append_only_update BEFORE UPDATE ON reconciled_account
BEGIN SELECT RAISE(ABORT, 'reconciliations cannot be changed'); END;
CREATE TRIGGER reconciled_account_is_append_only_delete BEFORE DELETE ON reconciled_account
BEGIN SELECT RAISE(ABORT, 'reconciliations cannot be deleted'); END;
CREATE TRIGGER period_reopening_is_append_only_update BEFORE UPDATE ON period_reopening
BEGIN SELECT RAISE(ABORT, 'reopenings cannot be changed'); END;
CREATE TRIGGER period_reopening_is_append_only_delete BEFORE DELETE ON period_reopening
BEGIN SELECT RAISE(ABORT, 'reopenings cannot be deleted'); END;
