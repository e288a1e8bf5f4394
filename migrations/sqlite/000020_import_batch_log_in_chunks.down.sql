-- Entries still owed are written now, in id order.
INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version, '', '', CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER)
FROM import_batches b JOIN measurements m ON m.batch = b.id AND m.id > b.logged_to AND m.id <= b.hi_id
WHERE b.committed = 1 AND b.logged_to IS NOT NULL ORDER BY m.id;
ALTER TABLE import_batches DROP COLUMN logged_to;
CREATE TRIGGER import_batch_log AFTER UPDATE OF committed ON import_batches WHEN NEW.committed <> 0 AND OLD.committed = 0 BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER)
    FROM measurements m, change_source WHERE m.batch = NEW.id AND m.id BETWEEN NEW.lo_id AND NEW.hi_id ORDER BY m.id;
END;
