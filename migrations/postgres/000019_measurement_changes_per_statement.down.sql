DROP FUNCTION corvane_log_batch(BIGINT, INT);
-- Entries still owed are written now, in id order.
INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
SELECT m.project_id, m.hole_id, 'measurements', m.global_id, 'create', m.version
FROM import_batches b JOIN measurements m ON m.batch = b.id AND m.id > b.logged_to AND m.id <= b.hi_id
WHERE b.committed AND b.logged_to IS NOT NULL AND m.global_id IS NOT NULL ORDER BY m.id;
ALTER TABLE import_batches DROP COLUMN logged_to;
DROP TRIGGER measurements_changed_insert ON measurements;
DROP TRIGGER measurements_changed_update ON measurements;
DROP TRIGGER measurements_changed_delete ON measurements;
DROP FUNCTION measurements_changed();
CREATE TRIGGER measurements_log AFTER INSERT OR UPDATE OR DELETE ON measurements FOR EACH ROW EXECUTE FUNCTION measurements_log();
CREATE TRIGGER measurement_stamp_insert AFTER INSERT ON measurements FOR EACH ROW WHEN (NEW.batch IS NULL) EXECUTE FUNCTION measurement_stamp();
CREATE TRIGGER measurement_stamp_update AFTER UPDATE ON measurements FOR EACH ROW WHEN (OLD.* IS DISTINCT FROM NEW.*) EXECUTE FUNCTION measurement_stamp();
CREATE TRIGGER measurement_stamp AFTER DELETE ON measurements FOR EACH ROW EXECUTE FUNCTION measurement_stamp();
