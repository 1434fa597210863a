-- keel schema, version 8: read-only views for analysts (docs/schema.md).
--
-- Views hold no data and accept no writes (SQLite refuses INSERT, UPDATE and
-- DELETE on a view without INSTEAD OF triggers, and keel defines none).
-- Decimals stay canonical text, exactly as stored; the one REAL column,
-- posted_transactions.cash_effect, is binary floating point for analysis
-- tools, while keel's own reports use the exact text columns.

-- Every transaction in force: void rows are left out, and so is every row a
-- void in force cancels. Along a chain row <- void <- void of the void ...,
-- the last void is in force, so a row is cancelled exactly when the chain
-- above it has an odd number of voids (a void of a void reinstates its row).
CREATE VIEW posted_transactions AS
WITH RECURSIVE voiders (txn_id, at, depth) AS (
  SELECT id, id, 0 FROM txn
  UNION ALL
  SELECT voiders.txn_id, v.id, voiders.depth + 1
  FROM voiders JOIN txn AS v ON v.voids_id = voiders.at
),
in_force (txn_id) AS (
  SELECT txn_id FROM voiders GROUP BY txn_id HAVING max(depth) % 2 = 0
)
SELECT
  t.id                    AS id,
  t.date                  AS date,
  a.name                  AS account,
  a.currency              AS account_currency,
  t.kind                  AS kind,
  s.symbol                AS symbol,
  s.name                  AS security_name,
  t.quantity              AS quantity,
  t.price                 AS price,
  t.amount                AS amount,
  t.fee                   AS fee,
  -- Cash into (+) or out of (-) the account, as the lot engine books it:
  -- a buy costs quantity x price + fee, a sell brings quantity x price - fee,
  -- a transfer of shares costs its fee, a cash transfer moves its amount.
  -- It is in the row's currency (column currency, else the account's); an
  -- exchange moves cash between two currencies and has none (NULL).
  CASE t.kind
    WHEN 'deposit'      THEN CAST(t.amount AS REAL)
    WHEN 'dividend'     THEN CAST(t.amount AS REAL)
    WHEN 'interest'     THEN CAST(t.amount AS REAL)
    WHEN 'withdrawal'   THEN -CAST(t.amount AS REAL)
    WHEN 'tax'          THEN -CAST(t.amount AS REAL)
    WHEN 'fee'          THEN -CAST(t.amount AS REAL)
    WHEN 'buy'          THEN -(CAST(t.quantity AS REAL) * CAST(t.price AS REAL)
                               + CAST(t.fee AS REAL))
    WHEN 'sell'         THEN CAST(t.quantity AS REAL) * CAST(t.price AS REAL)
                             - CAST(t.fee AS REAL)
    WHEN 'transfer_in'  THEN CASE WHEN t.security_id IS NULL THEN CAST(t.amount AS REAL)
                                  ELSE -CAST(t.fee AS REAL) END
    WHEN 'transfer_out' THEN CASE WHEN t.security_id IS NULL THEN -CAST(t.amount AS REAL)
                                  ELSE -CAST(t.fee AS REAL) END
  END                     AS cash_effect,
  t.ref                   AS ref,
  t.note                  AS note,
  t.link_id               AS link_id,
  t.currency              AS currency,
  t.rate                  AS rate,
  t.to_currency           AS to_currency
FROM txn AS t
JOIN in_force ON in_force.txn_id = t.id
JOIN account AS a ON a.id = t.account_id
LEFT JOIN security AS s ON s.id = t.security_id
WHERE t.kind <> 'void';

-- Daily closes as traded, with the security's symbol, name and currency.
CREATE VIEW closes AS
SELECT
  p.date     AS date,
  s.symbol   AS symbol,
  s.name     AS security_name,
  s.currency AS currency,
  p.close    AS close
FROM price AS p
JOIN security AS s ON s.id = p.security_id;

-- Point-in-time figures: each value with the day it became known and, when a
-- later restatement replaced it, the day that happened. The value known on a
-- day D is the row with known_on <= D and (replaced_on IS NULL OR
-- replaced_on > D).
CREATE VIEW point_in_time_figures AS
SELECT
  s.symbol   AS symbol,
  m.name     AS figure,
  m.date     AS period_end,
  m.known_on AS known_on,
  (SELECT min(later.known_on) FROM metric AS later
   WHERE later.security_id = m.security_id AND later.name = m.name AND later.date = m.date
     AND later.known_on > m.known_on) AS replaced_on,
  m.value    AS value
FROM metric AS m
JOIN security AS s ON s.id = m.security_id;
