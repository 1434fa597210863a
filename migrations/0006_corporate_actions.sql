-- keel schema: corporate actions and the dated history of renamed records.
--
-- A corporate action is recorded once for a security and applied to every
-- account's lots at the start of its day (src/ledger/actions.h states what
-- each kind does). Rows are never changed or deleted: an action is cancelled
-- by a row of kind 'void' naming it, with the reason in `note`.
--
-- Figures are exact decimals as canonical text, as everywhere in keel:
--   ratio        units received per unit held (split, merger, spin-off, stock dividend)
--   cash         cash per unit held (merger, return of capital, delisting)
--   cost_percent share of each lot's cost that goes to the units received
--                (merger: the stock part; spin-off: the new security)
--   in_lieu      price per unit at which fractional units received are paid in cash
CREATE TABLE corporate_action (
  id           INTEGER PRIMARY KEY,
  security_id  INTEGER NOT NULL REFERENCES security (id),
  date         TEXT NOT NULL CHECK (date GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  kind         TEXT NOT NULL CHECK (kind IN ('split', 'merger', 'spinoff', 'return_of_capital',
                                             'stock_dividend', 'delisting', 'void')),
  target_id    INTEGER REFERENCES security (id),
  ratio        TEXT CHECK (ratio IS NULL OR (ratio GLOB '[0-9]*' AND ratio <> '0')),
  cash         TEXT CHECK (cash IS NULL OR cash GLOB '[0-9]*'),
  cost_percent TEXT CHECK (cost_percent IS NULL OR cost_percent GLOB '[0-9]*'),
  in_lieu      TEXT CHECK (in_lieu IS NULL OR in_lieu GLOB '[0-9]*'),
  voids_id     INTEGER UNIQUE REFERENCES corporate_action (id),
  note         TEXT,
  recorded_at  TEXT NOT NULL,
  CHECK ((kind = 'void') = (voids_id IS NOT NULL)),
  CHECK (kind NOT IN ('merger', 'spinoff') OR target_id IS NOT NULL),
  CHECK (target_id IS NULL OR target_id <> security_id)
) STRICT;

CREATE INDEX corporate_action_by_date ON corporate_action (date, id);

CREATE TRIGGER corporate_action_is_append_only_update BEFORE UPDATE ON corporate_action
BEGIN SELECT RAISE(ABORT, 'recorded corporate actions cannot be changed; record a void instead'); END;
CREATE TRIGGER corporate_action_is_append_only_delete BEFORE DELETE ON corporate_action
BEGIN SELECT RAISE(ABORT, 'recorded corporate actions cannot be deleted; record a void instead'); END;

-- The values an account or a security had before a change of its
-- descriptive fields (a rename, a new sector...): one row per changed field,
-- with the day from which the new value holds.
CREATE TABLE record_change (
  id          INTEGER PRIMARY KEY,
  record      TEXT NOT NULL CHECK (record IN ('account', 'security')),
  record_id   INTEGER NOT NULL,
  field       TEXT NOT NULL CHECK (field IN ('name', 'symbol', 'sector', 'lot_size')),
  old_value   TEXT,
  new_value   TEXT,
  effective   TEXT NOT NULL
              CHECK (effective GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  recorded_at TEXT NOT NULL
) STRICT;

CREATE INDEX record_change_by_record ON record_change (record, record_id, effective, id);

CREATE TRIGGER record_change_is_append_only_update BEFORE UPDATE ON record_change
BEGIN SELECT RAISE(ABORT, 'recorded changes cannot be changed'); END;
CREATE TRIGGER record_change_is_append_only_delete BEFORE DELETE ON record_change
BEGIN SELECT RAISE(ABORT, 'recorded changes cannot be deleted'); END;

-- A posted transaction a plausibility check flags (a price far from the
-- day's close, a dividend on a security not held, a buy and a sale on one
-- day) that its owner has confirmed as right: no longer flagged.
CREATE TABLE confirmed_txn (
  txn_id      INTEGER PRIMARY KEY REFERENCES txn (id),
  reason      TEXT NOT NULL CHECK (length(reason) BETWEEN 1 AND 4000),
  recorded_at TEXT NOT NULL
) STRICT;

CREATE TRIGGER confirmed_txn_is_append_only_update BEFORE UPDATE ON confirmed_txn
BEGIN SELECT RAISE(ABORT, 'confirmations cannot be changed'); END;
CREATE TRIGGER confirmed_txn_is_append_only_delete BEFORE DELETE ON confirmed_txn
BEGIN SELECT RAISE(ABORT, 'confirmations cannot be deleted'); END;
