DROP FUNCTION corvane_log_batch(BIGINT, INT);
-- Entries still owed are written now, in id order.
INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version
FROM import_batches b JOIN measurements m ON m.batch = b.id AND m.id > b.logged_to AND m.id <= b.hi_id
WHERE b.committed AND b.logged_to IS NOT NULL AND m.global_id IS NOT NULL ORDER BY m.id;
ALTER TABLE import_batches DROP COLUMN logged_to;
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
