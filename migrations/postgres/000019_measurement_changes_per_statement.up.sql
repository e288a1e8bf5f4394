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
-- Only visible rows are logged (no batch, or a committed one): the rows of
-- an import batch are logged when the batch commits, by the trigger on
-- import_batches below (the commit no longer rewrites every row to fire the
-- update trigger), and a staged row deleted with its dropped batch leaves
-- no tombstone, as it was never logged. Stamps move as before: an insert of
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

-- The commit of an import batch logs its rows (found by the primary key
-- over the batch's id range), in id order, under the project's lock.
CREATE FUNCTION import_batch_log() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    PERFORM pg_advisory_xact_lock(1129467478, (NEW.project_id % 2147483647)::int);
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor)
        SELECT project_id, hole_id, 'measurements', global_id, 'create', version,
            COALESCE(current_setting('corvane.origin', true), ''), COALESCE(current_setting('corvane.actor', true), '')
        FROM measurements WHERE batch = NEW.id AND id BETWEEN NEW.lo_id AND NEW.hi_id AND global_id IS NOT NULL
        ORDER BY id;
    RETURN NULL;
END $$;
CREATE TRIGGER import_batch_log AFTER UPDATE OF committed ON import_batches
    FOR EACH ROW WHEN (NEW.committed AND NOT OLD.committed) EXECUTE FUNCTION import_batch_log();
