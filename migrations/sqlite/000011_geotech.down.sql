DROP TABLE core_intervals;
-- beta is required again: unoriented measurements cannot be kept and are
-- deleted.
DELETE FROM measurements WHERE beta IS NULL;
ALTER TABLE measurements ADD COLUMN beta_required REAL NOT NULL DEFAULT 0;
UPDATE measurements SET beta_required = beta;
ALTER TABLE measurements DROP COLUMN beta;
ALTER TABLE measurements RENAME COLUMN beta_required TO beta;
