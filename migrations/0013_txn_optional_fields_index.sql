-- keel schema, version 13: the few transactions with an optional field set.
--
-- Most rows are plain deposits, buys and sells: no acquisition date, lot
-- picks, link, void, currency, rate or currency bought. A read of the ledger
-- for its replay (store::list_transactions with TxnFields::replay) reads the
-- common columns of every row in one scan, and these seven columns only for
-- the rows this partial index lists, instead of testing them on every row.
-- The condition is the one that read's query gives, word for word: SQLite
-- uses a partial index only for a query whose WHERE implies the index's.

CREATE INDEX txn_with_optional_fields ON txn (id)
WHERE acquired IS NOT NULL OR lots IS NOT NULL OR link_id IS NOT NULL OR voids_id IS NOT NULL
   OR currency IS NOT NULL OR rate IS NOT NULL OR to_currency IS NOT NULL;
