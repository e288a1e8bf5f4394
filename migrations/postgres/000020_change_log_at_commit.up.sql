-- The project's change log lock is taken at commit, not at the first
-- logged write. Each logging transaction held the lock of its project from
-- its first logged statement until it ended, so seq followed commit order;
-- but a transaction also waits for its client in between (the statements
-- after the write, the COMMIT), so every writer of a project queued behind
-- those round trips: 16 clients of one project spent most of their time
-- waiting for the lock.
--
-- Now a logged change goes first to change_log_owed (the transaction's id,
-- the entry, its order), and the transaction's first such change adds a row
-- to change_log_due, whose deferred constraint trigger runs when the
-- transaction commits: it takes the lock of each project (in order), moves
-- the transaction's entries into change_log in the order they were made and
-- clears them. The lock is still held until the transaction ends and seq is
-- still given under it, so seq still follows commit order within a
-- project; it is only held for the commit itself. Both tables are UNLOGGED:
-- their rows never outlive the transaction that made them.
--
-- A statement of many measurements (more than 1,000 rows to log: a COPY, a
-- script) logs them at once as before, under the lock (which it then holds
-- until it ends), after moving what the transaction owed before it, so the
-- order of a transaction's entries stays the order of its statements.
-- Whoever reads the change log inside a writing transaction calls
-- corvane_log_flush() first, so it reads its own changes.

CREATE UNLOGGED TABLE change_log_owed (
    id         BIGSERIAL PRIMARY KEY,
    xact       xid8 NOT NULL,
    project_id BIGINT,
    hole_id    BIGINT,
    tbl        TEXT NOT NULL,
    global_id  TEXT NOT NULL,
    op         TEXT NOT NULL,
    version    BIGINT NOT NULL,
    origin     TEXT NOT NULL,
    actor      TEXT NOT NULL,
    at         TIMESTAMPTZ NOT NULL DEFAULT now()
);
CREATE INDEX change_log_owed_xact ON change_log_owed (xact, id);

CREATE UNLOGGED TABLE change_log_due (xact xid8 PRIMARY KEY);

-- Every row of both tables is deleted soon after it is written, so their
-- last pages empty again and again; a vacuum that cut them off the file
-- would lock the table against every logging transaction while it did.
ALTER TABLE change_log_owed SET (vacuum_truncate = false);
ALTER TABLE change_log_due SET (vacuum_truncate = false);

-- corvane_log_flush moves the entries the current transaction owes into
-- change_log under the lock of each of their projects; it does nothing in
-- a transaction that owes nothing.
CREATE FUNCTION corvane_log_flush() RETURNS void LANGUAGE plpgsql AS $$
DECLARE
    x xid8 := pg_current_xact_id_if_assigned();
BEGIN
    IF x IS NULL OR NOT EXISTS (SELECT 1 FROM change_log_owed WHERE xact = x) THEN
        RETURN;
    END IF;
    PERFORM pg_advisory_xact_lock(1129467478, (p % 2147483647)::int)
        FROM (SELECT DISTINCT COALESCE(project_id, 0) AS p FROM change_log_owed WHERE xact = x ORDER BY 1) ps;
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
        SELECT project_id, hole_id, tbl, global_id, op, version, origin, actor, at
        FROM change_log_owed WHERE xact = x ORDER BY id;
    DELETE FROM change_log_owed WHERE xact = x;
END $$;

CREATE FUNCTION change_log_due() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    PERFORM corvane_log_flush();
    DELETE FROM change_log_due WHERE xact = NEW.xact;
    RETURN NULL;
END $$;
CREATE CONSTRAINT TRIGGER change_log_due AFTER INSERT ON change_log_due
    DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION change_log_due();

CREATE OR REPLACE FUNCTION corvane_log(p_project BIGINT, p_hole BIGINT, p_tbl TEXT, p_gid TEXT, p_op TEXT, p_version BIGINT) RETURNS void AS $$
DECLARE
    x xid8 := pg_current_xact_id();
BEGIN
    IF p_gid IS NULL THEN
        RETURN;
    END IF;
    INSERT INTO change_log_owed (xact, project_id, hole_id, tbl, global_id, op, version, origin, actor)
    VALUES (x, p_project, p_hole, p_tbl, p_gid, p_op, p_version,
            COALESCE(current_setting('corvane.origin', true), ''), COALESCE(current_setting('corvane.actor', true), ''));
    INSERT INTO change_log_due VALUES (x) ON CONFLICT DO NOTHING;
END
$$ LANGUAGE plpgsql;

CREATE OR REPLACE FUNCTION measurements_changed() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
    -- The statement's rows: after an insert or update, before a delete.
    v_rows TEXT := CASE TG_OP WHEN 'DELETE' THEN 'old_rows' ELSE 'new_rows' END;
    v_op   TEXT := CASE TG_OP WHEN 'INSERT' THEN 'create' WHEN 'UPDATE' THEN 'update' ELSE 'delete' END;
    v_visible CONSTANT TEXT := '(batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed))';
    v_origin TEXT := COALESCE(current_setting('corvane.origin', true), '');
    v_actor  TEXT := COALESCE(current_setting('corvane.actor', true), '');
    v_n INT;
    x xid8;
BEGIN
    -- Static statements where a statement of few rows goes (their plans are
    -- kept by the session), dynamic ones for many rows.
    IF TG_OP = 'DELETE' THEN
        SELECT count(*) INTO v_n FROM (SELECT 1 FROM old_rows LIMIT 1001) r;
    ELSE
        IF TG_OP = 'INSERT' THEN
            -- Rows staged by an import: nothing to log, no stamp to move.
            IF NOT EXISTS (SELECT 1 FROM new_rows WHERE batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed)) THEN
                RETURN NULL;
            END IF;
        END IF;
        SELECT count(*) INTO v_n FROM (SELECT 1 FROM new_rows LIMIT 1001) r;
    END IF;
    IF v_n > 1000 THEN
        PERFORM corvane_log_flush();
        EXECUTE format('SELECT pg_advisory_xact_lock(1129467478, (p %% 2147483647)::int)
            FROM (SELECT DISTINCT project_id AS p FROM %I WHERE %s ORDER BY 1) ps', v_rows, v_visible);
        EXECUTE format('INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor)
            SELECT project_id, hole_id, ''measurements'', global_id, $1, version, $2, $3 FROM %I
            WHERE global_id IS NOT NULL AND %s ORDER BY id', v_rows, v_visible)
            USING v_op, v_origin, v_actor;
    ELSE
        x := pg_current_xact_id();
        IF TG_OP = 'DELETE' THEN
            INSERT INTO change_log_owed (xact, project_id, hole_id, tbl, global_id, op, version, origin, actor)
                SELECT x, project_id, hole_id, 'measurements', global_id, v_op, version, v_origin, v_actor FROM old_rows
                WHERE global_id IS NOT NULL AND (batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed)) ORDER BY id;
        ELSE
            INSERT INTO change_log_owed (xact, project_id, hole_id, tbl, global_id, op, version, origin, actor)
                SELECT x, project_id, hole_id, 'measurements', global_id, v_op, version, v_origin, v_actor FROM new_rows
                WHERE global_id IS NOT NULL AND (batch IS NULL OR batch IN (SELECT id FROM import_batches WHERE committed)) ORDER BY id;
        END IF;
        INSERT INTO change_log_due VALUES (x) ON CONFLICT DO NOTHING;
    END IF;
    -- The stamps (measurement_stamp_bump of each touched hole, once).
    IF TG_OP = 'INSERT' THEN
        INSERT INTO measurement_stamps (project_id, hole_id, stamp)
            SELECT DISTINCT project_id, hole_id, 1 FROM new_rows WHERE batch IS NULL ORDER BY 1, 2
            ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = measurement_stamps.stamp + 1;
    ELSIF TG_OP = 'UPDATE' THEN
        INSERT INTO measurement_stamps (project_id, hole_id, stamp)
            SELECT DISTINCT p, h, 1 FROM (
                SELECT o.project_id AS p, o.hole_id AS h FROM old_rows o JOIN new_rows n ON n.id = o.id WHERE o IS DISTINCT FROM n
                UNION ALL
                SELECT n.project_id, n.hole_id FROM old_rows o JOIN new_rows n ON n.id = o.id WHERE o IS DISTINCT FROM n
            ) c ORDER BY 1, 2
            ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = measurement_stamps.stamp + 1;
    ELSE
        INSERT INTO measurement_stamps (project_id, hole_id, stamp)
            SELECT DISTINCT project_id, hole_id, 1 FROM old_rows ORDER BY 1, 2
            ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = measurement_stamps.stamp + 1;
    END IF;
    RETURN NULL;
END $$;

-- A committed batch's chunk (corvane_log_batch) is logged at once under the
-- lock, after what its transaction owed before it.
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
    PERFORM corvane_log_flush();
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
