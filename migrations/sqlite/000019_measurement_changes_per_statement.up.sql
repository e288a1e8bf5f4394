-- Only visible measurements are logged (no batch, or a committed one): the
-- rows of an import batch are logged when the batch commits, by the trigger
-- on import_batches below (the commit no longer rewrites every row to fire
-- the update trigger), and a staged row deleted with its dropped batch
-- leaves no tombstone, as it was never logged. The same version on
-- PostgreSQL also moves measurements' change log entries and stamps from
-- row to statement triggers, which SQLite does not have.
DROP TRIGGER measurements_log_insert;
DROP TRIGGER measurements_log_update;
DROP TRIGGER measurements_log_delete;

CREATE TRIGGER measurements_log_insert AFTER INSERT ON measurements
WHEN NEW.batch IS NULL OR (SELECT committed FROM import_batches WHERE id = NEW.batch) = 1 BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NEW.hole_id, 'measurements', NEW.global_id, 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER measurements_log_update AFTER UPDATE ON measurements
WHEN NEW.batch IS NULL OR (SELECT committed FROM import_batches WHERE id = NEW.batch) = 1 BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NEW.hole_id, 'measurements', NEW.global_id, 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER measurements_log_delete AFTER DELETE ON measurements
WHEN OLD.batch IS NULL OR (SELECT committed FROM import_batches WHERE id = OLD.batch) = 1 BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT OLD.project_id, OLD.hole_id, 'measurements', OLD.global_id, 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

-- The commit of an import batch logs its rows (found by the primary key
-- over the batch's id range), in id order.
CREATE TRIGGER import_batch_log AFTER UPDATE OF committed ON import_batches WHEN NEW.committed <> 0 AND OLD.committed = 0 BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER)
    FROM measurements m, change_source WHERE m.batch = NEW.id AND m.id BETWEEN NEW.lo_id AND NEW.hi_id ORDER BY m.id;
END;
