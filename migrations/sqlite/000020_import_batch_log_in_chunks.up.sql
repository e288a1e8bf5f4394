-- The change log entries of an import batch's rows are written in chunks
-- after the batch commits, each chunk a short transaction of its own, so a
-- logger's single write waits for one chunk, not for the log of a whole
-- file (a million rows held the one writer for seconds). logged_to is the
-- id up to which a committed batch's rows are logged; NULL when nothing is
-- left to log. The rows are visible from the commit; the store writes the
-- rest of their entries (LogBatch) before any read of the change log, and a
-- process that stopped half way finishes them when it next starts.
ALTER TABLE import_batches ADD COLUMN logged_to BIGINT;
DROP TRIGGER import_batch_log;
