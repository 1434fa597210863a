-- keel schema, version 1: the ledger and point-in-time market data.
--
-- Exact decimals are stored as canonical text (see src/core/decimal.h): no
-- sign where the kind gives the direction, no trailing fractional zeros.
-- Dates are ISO 8601 calendar dates (YYYY-MM-DD) as text.

CREATE TABLE account (
  id                  INTEGER PRIMARY KEY,
  name                TEXT NOT NULL UNIQUE CHECK (length(name) BETWEEN 1 AND 200),
  currency            TEXT NOT NULL CHECK (length(currency) = 3 AND currency = upper(currency)),
  basis_method        TEXT NOT NULL DEFAULT 'fifo'
                      CHECK (basis_method IN ('fifo', 'lifo', 'hifo', 'average', 'specific')),
  allow_negative_cash INTEGER NOT NULL DEFAULT 0 CHECK (allow_negative_cash IN (0, 1)),
  created_at          TEXT NOT NULL
) STRICT;

CREATE TABLE security (
  id       INTEGER PRIMARY KEY,
  symbol   TEXT NOT NULL UNIQUE CHECK (length(symbol) BETWEEN 1 AND 40),
  name     TEXT NOT NULL CHECK (length(name) BETWEEN 1 AND 200),
  kind     TEXT NOT NULL CHECK (kind IN ('stock', 'fund', 'bond', 'index', 'currency')),
  currency TEXT NOT NULL CHECK (length(currency) = 3 AND currency = upper(currency)),
  lot_size TEXT NOT NULL DEFAULT '1' CHECK (lot_size GLOB '[0-9]*' AND lot_size <> '0'),
  sector   TEXT
) STRICT;

-- Every posted transaction. Rows are never updated or deleted (see triggers);
-- a correction is a row of kind 'void' naming the row it cancels.
CREATE TABLE txn (
  id          INTEGER PRIMARY KEY,
  account_id  INTEGER NOT NULL REFERENCES account (id),
  date        TEXT NOT NULL CHECK (date GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  kind        TEXT NOT NULL CHECK (kind IN ('deposit', 'withdrawal', 'buy', 'sell', 'dividend',
                                            'interest', 'tax', 'fee', 'transfer_in',
                                            'transfer_out', 'void')),
  security_id INTEGER REFERENCES security (id),
  quantity    TEXT CHECK (quantity IS NULL OR (quantity GLOB '[0-9]*' AND quantity <> '0')),
  price       TEXT CHECK (price IS NULL OR price GLOB '[0-9]*'),
  amount      TEXT CHECK (amount IS NULL OR (amount GLOB '[0-9]*' AND amount <> '0')),
  fee         TEXT NOT NULL DEFAULT '0' CHECK (fee GLOB '[0-9]*'),
  acquired    TEXT CHECK (acquired IS NULL OR
                          acquired GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  lots        TEXT,      -- specific-lot selection for a sell: "lotid:qty,lotid:qty"
  link_id     INTEGER REFERENCES txn (id),  -- the other half of an internal transfer
  voids_id    INTEGER UNIQUE REFERENCES txn (id),
  ref         TEXT,      -- external reference, unique per account
  row_hash    TEXT,      -- content hash of an imported row without ref
  note        TEXT,
  recorded_at TEXT NOT NULL,
  UNIQUE (account_id, ref),
  UNIQUE (account_id, row_hash),
  CHECK ((kind = 'void') = (voids_id IS NOT NULL)),
  CHECK (kind NOT IN ('buy', 'sell') OR
         (security_id IS NOT NULL AND quantity IS NOT NULL AND price IS NOT NULL)),
  CHECK (kind NOT IN ('deposit', 'withdrawal', 'dividend', 'interest', 'tax', 'fee') OR
         amount IS NOT NULL),
  CHECK (kind NOT IN ('transfer_in', 'transfer_out') OR
         (security_id IS NOT NULL AND quantity IS NOT NULL AND amount IS NULL) OR
         (security_id IS NULL AND quantity IS NULL AND amount IS NOT NULL))
) STRICT;

CREATE INDEX txn_by_account_date ON txn (account_id, date, id);
CREATE INDEX txn_by_date ON txn (date, id);

CREATE TRIGGER txn_is_append_only_update BEFORE UPDATE ON txn
BEGIN
  SELECT RAISE(ABORT, 'posted transactions cannot be changed; record a void instead');
END;

CREATE TRIGGER txn_is_append_only_delete BEFORE DELETE ON txn
BEGIN
  SELECT RAISE(ABORT, 'posted transactions cannot be deleted; record a void instead');
END;

-- A split applies to every account's lots at the start of its day.
CREATE TABLE split (
  id          INTEGER PRIMARY KEY,
  security_id INTEGER NOT NULL REFERENCES security (id),
  date        TEXT NOT NULL CHECK (date GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  ratio       TEXT NOT NULL CHECK (ratio GLOB '[0-9]*' AND ratio <> '0'),
  recorded_at TEXT NOT NULL,
  UNIQUE (security_id, date)
) STRICT;

CREATE TRIGGER split_is_append_only_update BEFORE UPDATE ON split
BEGIN
  SELECT RAISE(ABORT, 'recorded splits cannot be changed');
END;

CREATE TRIGGER split_is_append_only_delete BEFORE DELETE ON split
BEGIN
  SELECT RAISE(ABORT, 'recorded splits cannot be deleted');
END;

-- Daily closes as traded (not adjusted for splits or distributions).
CREATE TABLE price (
  security_id INTEGER NOT NULL REFERENCES security (id),
  date        TEXT NOT NULL,
  close       TEXT NOT NULL CHECK (close GLOB '[0-9]*'),
  PRIMARY KEY (security_id, date)
) STRICT, WITHOUT ROWID;

-- A figure for the period ending `date`, first knowable on `known_on`.
-- A restatement is a new row with the same date and a later known_on.
CREATE TABLE metric (
  security_id INTEGER NOT NULL REFERENCES security (id),
  name        TEXT NOT NULL CHECK (length(name) BETWEEN 1 AND 60),
  date        TEXT NOT NULL,
  known_on    TEXT NOT NULL CHECK (known_on >= date),
  value       TEXT NOT NULL,
  PRIMARY KEY (security_id, name, date, known_on)
) STRICT, WITHOUT ROWID;

CREATE INDEX metric_by_name_known ON metric (name, known_on);

-- Cash distributions per share, as market data (the ledger books the cash the
-- account actually received as 'dividend' transactions).
CREATE TABLE distribution (
  security_id INTEGER NOT NULL REFERENCES security (id),
  ex_date     TEXT NOT NULL,
  pay_date    TEXT NOT NULL CHECK (pay_date >= ex_date),
  per_share   TEXT NOT NULL CHECK (per_share GLOB '[0-9]*'),
  PRIMARY KEY (security_id, ex_date)
) STRICT, WITHOUT ROWID;

-- One row per import run that wrote something.
CREATE TABLE import_run (
  id          INTEGER PRIMARY KEY,
  what        TEXT NOT NULL,
  file_name   TEXT NOT NULL,
  file_sha256 TEXT NOT NULL,
  rows_read   INTEGER NOT NULL CHECK (rows_read >= 0),
  rows_added  INTEGER NOT NULL CHECK (rows_added >= 0),
  imported_at TEXT NOT NULL
) STRICT;
