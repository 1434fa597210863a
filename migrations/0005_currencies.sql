-- keel schema: foreign currencies.
--
-- Exchange rates are market data: `rate` is the number of `quote` units one
-- `base` unit buys on `date` (EUR/USD 1.10: one euro buys 1.10 dollars).
-- The rate for a pair on a day is the latest on or before it; inverses and
-- crosses are derived when read, never stored.
CREATE TABLE fx_rate (
  base  TEXT NOT NULL CHECK (length(base) = 3 AND base = upper(base)),
  quote TEXT NOT NULL CHECK (length(quote) = 3 AND quote = upper(quote) AND quote <> base),
  date  TEXT NOT NULL CHECK (date GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  rate  TEXT NOT NULL CHECK (rate GLOB '[0-9]*' AND rate <> '0'),
  PRIMARY KEY (base, quote, date)
) STRICT, WITHOUT ROWID;

-- Transactions gain the currency their figures are in and a rate, and a new
-- kind, 'exchange' (cash of one currency into another inside an account).
-- SQLite cannot change a CHECK constraint in place, so the table is rebuilt
-- (SQLite's documented procedure: new table, copy, drop, rename; the
-- migration runner turns foreign keys off around it and checks them after).
--
--  currency     the currency of price, amount and fee; NULL: the account's.
--  rate         a buy, sell, dividend, interest or tax in a foreign currency
--               settled in the account's own cash: how many `currency` units
--               one unit of the account's currency bought (the broker's
--               settlement rate). An exchange: how many `to_currency` units
--               one `currency` unit bought.
--  to_currency  an exchange: the currency bought; `amount` is what was sold.
CREATE TABLE txn_new (
  id          INTEGER PRIMARY KEY,
  account_id  INTEGER NOT NULL REFERENCES account (id),
  date        TEXT NOT NULL CHECK (date GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  kind        TEXT NOT NULL CHECK (kind IN ('deposit', 'withdrawal', 'buy', 'sell', 'dividend',
                                            'interest', 'tax', 'fee', 'transfer_in',
                                            'transfer_out', 'void', 'exchange')),
  security_id INTEGER REFERENCES security (id),
  quantity    TEXT CHECK (quantity IS NULL OR (quantity GLOB '[0-9]*' AND quantity <> '0')),
  price       TEXT CHECK (price IS NULL OR price GLOB '[0-9]*'),
  amount      TEXT CHECK (amount IS NULL OR (amount GLOB '[0-9]*' AND amount <> '0')),
  fee         TEXT NOT NULL DEFAULT '0' CHECK (fee GLOB '[0-9]*'),
  acquired    TEXT CHECK (acquired IS NULL OR
                          acquired GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  lots        TEXT,
  link_id     INTEGER REFERENCES txn (id),
  voids_id    INTEGER UNIQUE REFERENCES txn (id),
  ref         TEXT,
  row_hash    TEXT,
  note        TEXT,
  recorded_at TEXT NOT NULL,
  currency    TEXT CHECK (currency IS NULL OR (length(currency) = 3 AND currency = upper(currency))),
  rate        TEXT CHECK (rate IS NULL OR (rate GLOB '[0-9]*' AND rate <> '0')),
  to_currency TEXT CHECK (to_currency IS NULL OR
                          (length(to_currency) = 3 AND to_currency = upper(to_currency))),
  UNIQUE (account_id, ref),
  UNIQUE (account_id, row_hash),
  CHECK ((kind = 'void') = (voids_id IS NOT NULL)),
  CHECK (kind NOT IN ('buy', 'sell') OR
         (security_id IS NOT NULL AND quantity IS NOT NULL AND price IS NOT NULL)),
  CHECK (kind NOT IN ('deposit', 'withdrawal', 'dividend', 'interest', 'tax', 'fee') OR
         amount IS NOT NULL),
  CHECK (kind NOT IN ('transfer_in', 'transfer_out') OR
         (security_id IS NOT NULL AND quantity IS NOT NULL AND amount IS NULL) OR
         (security_id IS NULL AND quantity IS NULL AND amount IS NOT NULL)),
  CHECK ((kind = 'exchange') = (to_currency IS NOT NULL)),
  CHECK (kind <> 'exchange' OR
         (amount IS NOT NULL AND rate IS NOT NULL AND security_id IS NULL AND
          to_currency IS NOT coalesce(currency, ''))),
  CHECK (rate IS NULL OR kind IN ('buy', 'sell', 'dividend', 'interest', 'tax', 'exchange'))
) STRICT;

INSERT INTO txn_new (id, account_id, date, kind, security_id, quantity, price, amount, fee,
                     acquired, lots, link_id, voids_id, ref, row_hash, note, recorded_at)
SELECT id, account_id, date, kind, security_id, quantity, price, amount, fee, acquired, lots,
       link_id, voids_id, ref, row_hash, note, recorded_at
FROM txn;

DROP TABLE txn;
ALTER TABLE txn_new RENAME TO txn;

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
