DROP TRIGGER import_batch_log;
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
