-- Measurements' change log entries and stamps per statement, not per row.
-- Row triggers took the project's advisory lock and bumped the hole's stamp
-- row once per row; each bump made a new version of that one row, which the
-- next bump in the same transaction had to walk past, so a bulk write (a
-- COPY, an import's last rows, a script) cost in the square of its rows per
-- hole. Now a statement logs its rows with one INSERT ... SELECT from the
-- statement's rows (in id order, under the lock of each of their projects)
-- and moves the stamp of each hole it touched once. A statement that logs
-- nothing (rows staged by an import) takes no lock: a logger's single write
-- does not wait for an import's batches.
--
-- Only visible rows are logged (no batch, or a committed one): the commit
-- of an import batch no longer rewrites every row to fire the update
-- trigger, and a staged row deleted with its dropped batch leaves no
-- tombstone, as it was never logged. A committed batch's rows are logged
-- after its commit, in chunks (corvane_log_batch below), each a short
-- transaction of its own, so other writers of the project wait for one
-- chunk (the project's log lock), not for the log of a whole file;
-- logged_to is the id up to which a committed batch's rows are logged, NULL
-- when nothing is left. Whoever reads the change log writes what is owed
-- first. Stamps move as before: an insert of
-- rows outside a batch, an update that changes a row, any delete, the
-- commit of a batch.

DROP TRIGGER measurements_log ON measurements;
DROP TRIGGER measurement_stamp_insert ON measurements;
DROP TRIGGER measurement_stamp_update ON measurements;
DROP TRIGGER measurement_stamp ON measurements;

CREATE FUNCTION measurements_changed() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
    -- The statement's rows: after an insert or update, before a delete.
    v_rows TEXT := CASE TG_OP WHEN 'DELETE' THEN 'old_rows' ELSE 'new_rows' END;
    v_op   TEXT := CASE TG_OP WHEN 'INSERT' THEN 'create' WHEN 'UPDATE' THEN 'update' ELSE 'delete' END;
    v_visible CONSTANT TEXT := '(batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed))';
BEGIN
    IF TG_OP = 'INSERT' THEN
        -- Rows staged by an import: nothing to log, no stamp to move.
        IF NOT EXISTS (SELECT 1 FROM new_rows WHERE batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed)) THEN
            RETURN NULL;
        END IF;
    END IF;
    EXECUTE format('SELECT pg_advisory_xact_lock(1129467478, (p %% 2147483647)::int)
        FROM (SELECT DISTINCT project_id AS p FROM %I WHERE %s ORDER BY 1) ps', v_rows, v_visible);
    EXECUTE format('INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor)
        SELECT project_id, hole_id, ''measurements'', global_id, $1, version, $2, $3 FROM %I
        WHERE global_id IS NOT NULL AND %s ORDER BY id', v_rows, v_visible)
        USING v_op, COALESCE(current_setting('corvane.origin', true), ''), COALESCE(current_setting('corvane.actor', true), '');
    IF TG_OP = 'INSERT' THEN
        PERFORM measurement_stamp_bump(p, h)
            FROM (SELECT DISTINCT project_id AS p, hole_id AS h FROM new_rows WHERE batch IS NULL ORDER BY 1, 2) ph;
    ELSIF TG_OP = 'UPDATE' THEN
        PERFORM measurement_stamp_bump(p, h)
            FROM (SELECT DISTINCT p, h FROM (
                SELECT o.project_id AS p, o.hole_id AS h FROM old_rows o JOIN new_rows n ON n.id = o.id WHERE o IS DISTINCT FROM n
                UNION ALL
                SELECT n.project_id, n.hole_id FROM old_rows o JOIN new_rows n ON n.id = o.id WHERE o IS DISTINCT FROM n
            ) c ORDER BY 1, 2) ph;
    ELSE
        PERFORM measurement_stamp_bump(p, h)
            FROM (SELECT DISTINCT project_id AS p, hole_id AS h FROM old_rows ORDER BY 1, 2) ph;
    END IF;
    RETURN NULL;
END $$;
CREATE TRIGGER measurements_changed_insert AFTER INSERT ON measurements
    REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION measurements_changed();
CREATE TRIGGER measurements_changed_update AFTER UPDATE ON measurements
    REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION measurements_changed();
CREATE TRIGGER measurements_changed_delete AFTER DELETE ON measurements
    REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION measurements_changed();

ALTER TABLE import_batches ADD COLUMN logged_to BIGINT;

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
