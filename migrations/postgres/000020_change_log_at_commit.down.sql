-- Back to the lock taken at the first logged write (000012, 000019).
CREATE OR REPLACE FUNCTION corvane_log(p_project BIGINT, p_hole BIGINT, p_tbl TEXT, p_gid TEXT, p_op TEXT, p_version BIGINT) RETURNS void AS $$
BEGIN
    IF p_gid IS NULL THEN
        RETURN;
    END IF;
    PERFORM pg_advisory_xact_lock(1129467478, (COALESCE(p_project, 0) % 2147483647)::int);
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor)
    VALUES (p_project, p_hole, p_tbl, p_gid, p_op, p_version,
            COALESCE(current_setting('corvane.origin', true), ''), COALESCE(current_setting('corvane.actor', true), ''));
END
$$ LANGUAGE plpgsql;

CREATE OR REPLACE FUNCTION measurements_changed() RETURNS trigger LANGUAGE plpgsql AS $$
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

CREATE OR REPLACE FUNCTION corvane_log_batch(p_batch BIGINT, p_rows INT) RETURNS BOOLEAN LANGUAGE plpgsql AS $$
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

DROP TRIGGER change_log_due ON change_log_due;
DROP FUNCTION change_log_due();
DROP FUNCTION corvane_log_flush();
DROP TABLE change_log_due;
DROP TABLE change_log_owed;
