-- The change log entries of an import batch's rows are written in chunks
-- after the batch commits, each chunk a short transaction of its own, so
-- other writers of the project wait for one chunk (the project's log lock),
-- not for the log of a whole file. logged_to is the id up to which a
-- committed batch's rows are logged; NULL when nothing is left to log. The
-- rows are visible from the commit; the store writes the rest of their
-- entries (LogBatch) before any read of the change log, and a process that
-- stopped half way finishes them when it next starts.
ALTER TABLE import_batches ADD COLUMN logged_to BIGINT;
DROP TRIGGER import_batch_log ON import_batches;
DROP FUNCTION import_batch_log();

-- corvane_log_batch logs the next rows (at most p_rows) of the committed
-- batch p_batch, under the project's log lock, and returns whether rows are
-- left. Two callers on one batch take turns on its row.
CREATE FUNCTION corvane_log_batch(p_batch BIGINT, p_rows INT) RETURNS BOOLEAN LANGUAGE plpgsql AS $$
DECLARE
    b import_batches%ROWTYPE;
    v_upto BIGINT;
BEGIN
    SELECT * INTO b FROM import_batches WHERE id = p_batch AND committed FOR UPDATE;
    IF NOT FOUND OR b.logged_to IS NULL THEN
        RETURN FALSE;
    END IF;
    SELECT max(id) INTO v_upto FROM (SELECT id FROM measurements
        WHERE id > b.logged_to AND id <= b.hi_id AND batch = p_batch ORDER BY id LIMIT p_rows) c;
    IF v_upto IS NULL THEN
        UPDATE import_batches SET logged_to = NULL WHERE id = p_batch;
        RETURN FALSE;
    END IF;
    PERFORM pg_advisory_xact_lock(1129467478, (b.project_id % 2147483647)::int);
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor)
        SELECT project_id, hole_id, 'measurements', global_id, 'create', version,
            COALESCE(current_setting('corvane.origin', true), ''), COALESCE(current_setting('corvane.actor', true), '')
        FROM measurements WHERE id > b.logged_to AND id <= v_upto AND batch = p_batch AND global_id IS NOT NULL
        ORDER BY id;
    IF v_upto >= b.hi_id THEN
        UPDATE import_batches SET logged_to = NULL WHERE id = p_batch;
        RETURN FALSE;
    END IF;
    UPDATE import_batches SET logged_to = v_upto WHERE id = p_batch;
    RETURN TRUE;
END $$;
