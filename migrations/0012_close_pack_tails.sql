-- keel schema, version 12: close packs that survive closes appended after them.
--
-- A close_pack row now says the last day its closes cover (last_day, ISO
-- text; '' for a pack of no closes). A pack holds every close of its security
-- dated on or before that day, exactly as stored; closes dated after it are
-- the pack's tail, read from the price rows at load (market/series.h) by one
-- range read on the key (security_id, date). So the triggers drop a pack only
-- for a change on or before its last day: a close inserted, changed or
-- deleted after it leaves the pack as true as it was. A load that finds a long
-- tail packs the security again.
--
-- The table is derived data: its rows from version 11 carry no last day and
-- are dropped; the next load packs again.

DROP TRIGGER price_insert_drops_pack;
DROP TRIGGER price_update_drops_pack;
DROP TRIGGER price_delete_drops_pack;
DROP TABLE close_pack;

CREATE TABLE close_pack (
  security_id INTEGER PRIMARY KEY REFERENCES security (id),
  last_day    TEXT NOT NULL CHECK (last_day = '' OR length(last_day) = 10),
  packed      BLOB NOT NULL
) STRICT;

CREATE TRIGGER price_insert_drops_pack AFTER INSERT ON price
BEGIN
  DELETE FROM close_pack WHERE security_id = NEW.security_id AND last_day >= NEW.date;
END;

CREATE TRIGGER price_update_drops_pack AFTER UPDATE ON price
BEGIN
  DELETE FROM close_pack
  WHERE (security_id = OLD.security_id AND last_day >= OLD.date)
     OR (security_id = NEW.security_id AND last_day >= NEW.date);
END;

CREATE TRIGGER price_delete_drops_pack AFTER DELETE ON price
BEGIN
  DELETE FROM close_pack WHERE security_id = OLD.security_id AND last_day >= OLD.date;
END;
