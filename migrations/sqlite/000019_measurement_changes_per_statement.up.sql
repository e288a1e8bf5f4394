-- Only visible measurements are logged (no batch, or a committed one): the
-- commit of an import batch no longer rewrites every row to fire the update
-- trigger, and a staged row deleted with its dropped batch leaves no
-- tombstone, as it was never logged. A committed batch's rows are logged
-- after its commit, in chunks, each a short transaction of its own, so a
-- logger's single write waits for one chunk, not for the log of a whole
-- file (Store.LogBatch): logged_to is the id up to which a committed
-- batch's rows are logged, NULL when nothing is left to log. Whoever reads
-- the change log writes what is still owed first. The same version on
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

ALTER TABLE import_batches ADD COLUMN logged_to BIGINT;
