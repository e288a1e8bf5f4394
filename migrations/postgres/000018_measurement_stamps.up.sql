-- Measurement stamps: counters that move on every change of a project's
-- visible measurements (insert, update, delete, the commit of an import
-- batch), whoever writes it. The service keeps each project's oriented
-- measurements between requests and uses them only while the sum of the
-- project's counters and its model stamp are those it read them at. One
-- row per hole (hole_id 0: the project's import batches), so writers of
-- different holes do not wait on one row lock; a row is never deleted, so
-- the sum only grows. A row staged by an import (batch not null) is
-- invisible and moves nothing until its batch commits.
CREATE TABLE measurement_stamps (
    project_id BIGINT NOT NULL,
    hole_id    BIGINT NOT NULL,
    stamp      BIGINT NOT NULL,
    PRIMARY KEY (project_id, hole_id)
);
CREATE FUNCTION measurement_stamp_bump(p BIGINT, h BIGINT) RETURNS void LANGUAGE sql AS $$
    INSERT INTO measurement_stamps (project_id, hole_id, stamp) VALUES (p, h, 1)
        ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = measurement_stamps.stamp + 1
$$;
CREATE FUNCTION measurement_stamp() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF TG_TABLE_NAME = 'import_batches' THEN
        PERFORM measurement_stamp_bump(NEW.project_id, 0);
        RETURN NULL;
    END IF;
    IF TG_OP <> 'INSERT' THEN
        PERFORM measurement_stamp_bump(OLD.project_id, OLD.hole_id);
    END IF;
    IF TG_OP <> 'DELETE' THEN
        PERFORM measurement_stamp_bump(NEW.project_id, NEW.hole_id);
    END IF;
    RETURN NULL;
END $$;
CREATE TRIGGER measurement_stamp_insert AFTER INSERT ON measurements FOR EACH ROW WHEN (NEW.batch IS NULL) EXECUTE FUNCTION measurement_stamp();
-- An update that changes nothing (the commit of an import batch touches its
-- rows for the change log) moves nothing: the batch's commit moves the
-- stamp once.
CREATE TRIGGER measurement_stamp_update AFTER UPDATE ON measurements FOR EACH ROW WHEN (OLD.* IS DISTINCT FROM NEW.*) EXECUTE FUNCTION measurement_stamp();
CREATE TRIGGER measurement_stamp AFTER DELETE ON measurements FOR EACH ROW EXECUTE FUNCTION measurement_stamp();
CREATE TRIGGER measurement_stamp AFTER UPDATE OF committed ON import_batches FOR EACH ROW WHEN (NEW.committed IS DISTINCT FROM OLD.committed) EXECUTE FUNCTION measurement_stamp();
