-- keel schema, version 11: each security's closes packed for fast loading.
--
-- A close_pack row holds every close of one security in a compact binary form
-- (market/close_pack.h), written by the first command that loads many days of
-- closes (back-test, signal check, returns, statement) and read instead of
-- the price rows by later ones. It is derived data, never the record: the
-- triggers below delete a security's pack in the same transaction as any
-- change to its closes, so a pack present is always the closes as stored, and
-- a missing one is simply rebuilt from the price table.

CREATE TABLE close_pack (
  security_id INTEGER PRIMARY KEY REFERENCES security (id),
  packed      BLOB NOT NULL
) STRICT;

CREATE TRIGGER price_insert_drops_pack AFTER INSERT ON price
BEGIN
  DELETE FROM close_pack WHERE security_id = NEW.security_id;
END;

CREATE TRIGGER price_update_drops_pack AFTER UPDATE ON price
BEGIN
  DELETE FROM close_pack WHERE security_id IN (OLD.security_id, NEW.security_id);
END;

CREATE TRIGGER price_delete_drops_pack AFTER DELETE ON price
BEGIN
  DELETE FROM close_pack WHERE security_id = OLD.security_id;
END;
