-- The committed import batches whose change log is still owed: the sync
-- feed, a sync push and the start of serve list them before they read the
-- change log (UnloggedBatches). import_batches keeps one row per large
-- import for good, so without an index each of those reads scanned every
-- import ever made; the partial index holds only the few batches still
-- owed (logged_to is set at commit and cleared once the last chunk is
-- logged).
CREATE INDEX import_batches_unlogged ON import_batches (id) WHERE logged_to IS NOT NULL;
