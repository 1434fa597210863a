-- keel schema, version 9: saved proposals of a plan.
--
-- A plan's proposal is kept in the same tables as a rule's: the plan file's
-- text and SHA-256 in the rule_* columns, kind = 'plan'. A plan names its
-- accounts through its pools and its parts' rule files, so the accounts the
-- proposal covered are kept apart (proposal_account), and each order keeps
-- the part it serves. A rule's proposal has kind = 'rule', no accounts here
-- (its rule text names them) and no part.

ALTER TABLE proposal ADD COLUMN kind TEXT NOT NULL DEFAULT 'rule'
  CHECK (kind IN ('rule', 'plan'));

ALTER TABLE proposal_order ADD COLUMN part TEXT
  CHECK (part IS NULL OR length(part) BETWEEN 1 AND 200);

CREATE TABLE proposal_account (
  proposal_id INTEGER NOT NULL REFERENCES proposal (id),
  account_id  INTEGER NOT NULL REFERENCES account (id),
  PRIMARY KEY (proposal_id, account_id)
) STRICT, WITHOUT ROWID;

CREATE TRIGGER proposal_account_is_append_only_update BEFORE UPDATE ON proposal_account
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be changed');
END;

CREATE TRIGGER proposal_account_is_append_only_delete BEFORE DELETE ON proposal_account
BEGIN
  SELECT RAISE(ABORT, 'saved proposals cannot be deleted');
END;
