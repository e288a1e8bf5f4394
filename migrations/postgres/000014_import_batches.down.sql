-- Rows of imports that never committed go with their batches.
DELETE FROM measurements WHERE batch IN (SELECT id FROM import_batches WHERE NOT committed);
ALTER TABLE measurements DROP COLUMN batch;
DROP TABLE import_batches;
