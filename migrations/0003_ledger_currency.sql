-- keel schema, version 3: the ledger's own currency.
--
-- The currency an account or a security added without one takes. Set by
-- 'keel init --currency CODE', else by the first account added. A ledger
-- from version 2 takes the currency its accounts keep when they all keep the
-- same one; otherwise (no accounts yet, or accounts in several currencies) it
-- stays unset until an init with --currency or, with no accounts yet, the
-- first account sets it. Once set it never changes.

CREATE TABLE ledger_setting (
  id       INTEGER PRIMARY KEY CHECK (id = 1),
  currency TEXT CHECK (currency IS NULL OR (length(currency) = 3 AND currency = upper(currency)))
) STRICT;

INSERT INTO ledger_setting (id, currency)
SELECT 1, CASE WHEN count(DISTINCT currency) = 1 THEN min(currency) END FROM account;

CREATE TRIGGER ledger_currency_is_set_once BEFORE UPDATE ON ledger_setting
WHEN OLD.currency IS NOT NULL AND NEW.currency IS NOT OLD.currency
BEGIN
  SELECT RAISE(ABORT, 'the ledger''s currency is set once and never changed');
END;

CREATE TRIGGER ledger_setting_is_kept BEFORE DELETE ON ledger_setting
BEGIN
  SELECT RAISE(ABORT, 'the ledger''s settings cannot be deleted');
END;
