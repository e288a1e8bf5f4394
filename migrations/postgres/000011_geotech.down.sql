DROP TABLE core_intervals;
-- beta is required again: unoriented measurements cannot be kept and are
-- deleted.
DELETE FROM measurements WHERE beta IS NULL;
ALTER TABLE measurements ALTER COLUMN beta SET NOT NULL;
