-- Entries still owed are written now, in id order.
INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version, '', '', CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER)
FROM import_batches b JOIN measurements m ON m.batch = b.id AND m.id > b.logged_to AND m.id <= b.hi_id
WHERE b.committed = 1 AND b.logged_to IS NOT NULL ORDER BY m.id;
ALTER TABLE import_batches DROP COLUMN logged_to;
DROP TRIGGER measurements_log_insert;
DROP TRIGGER measurements_log_update;
DROP TRIGGER measurements_log_delete;

CREATE TRIGGER measurements_log_insert AFTER INSERT ON measurements BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NEW.hole_id, 'measurements', NEW.global_id, 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER measurements_log_update AFTER UPDATE ON measurements BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NEW.hole_id, 'measurements', NEW.global_id, 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER measurements_log_delete AFTER DELETE ON measurements BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT OLD.project_id, OLD.hole_id, 'measurements', OLD.global_id, 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;
