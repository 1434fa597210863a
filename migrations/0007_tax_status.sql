-- keel schema: the tax status of accounts and the issuer's country of securities.
--
-- An account is 'taxable', 'tax-deferred' or 'tax-exempt'. Its status is a
-- dated history: a row holds from `from_day` until the next row of the same
-- account. An account with no row on or before a day is taxable that day, so
-- every account of an older ledger stays taxable until told otherwise.
-- A status given when the account is added holds from 0001-01-01. Rows are
-- records: never changed or deleted; a change is a new row.

CREATE TABLE account_tax_status (
  account_id  INTEGER NOT NULL REFERENCES account (id),
  from_day    TEXT NOT NULL
              CHECK (from_day GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]'),
  status      TEXT NOT NULL CHECK (status IN ('taxable', 'tax-deferred', 'tax-exempt')),
  recorded_at TEXT NOT NULL,
  PRIMARY KEY (account_id, from_day)
) STRICT;

CREATE TRIGGER account_tax_status_is_append_only_update BEFORE UPDATE ON account_tax_status
BEGIN SELECT RAISE(ABORT, 'tax status history cannot be changed; record a new status'); END;
CREATE TRIGGER account_tax_status_is_append_only_delete BEFORE DELETE ON account_tax_status
BEGIN SELECT RAISE(ABORT, 'tax status history cannot be deleted; record a new status'); END;

-- The issuer's country, ISO 3166-1 alpha-2 ("NL"), for summing withholding
-- tax by country. Descriptive only; unset when not known.
ALTER TABLE security ADD COLUMN country TEXT
  CHECK (country IS NULL OR (length(country) = 2 AND country = upper(country)
                             AND country GLOB '[A-Z][A-Z]'));
