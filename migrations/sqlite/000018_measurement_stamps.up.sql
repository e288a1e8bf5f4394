-- Measurement stamps: counters that move on every change of a project's
-- visible measurements (insert, update, delete, the commit of an import
-- batch), whoever writes it. The service keeps each project's oriented
-- measurements between requests and uses them only while the sum of the
-- project's counters and its model stamp are those it read them at. One
-- row per hole (hole_id 0: the project's import batches), so writers of
-- different holes do not wait on one row; a row is never deleted, so the
-- sum only grows. A row staged by an import (batch not null) is invisible
-- and moves nothing until its batch commits.
CREATE TABLE measurement_stamps (
    project_id BIGINT NOT NULL,
    hole_id    BIGINT NOT NULL,
    stamp      BIGINT NOT NULL,
    PRIMARY KEY (project_id, hole_id)
);
CREATE TRIGGER measurement_stamp_insert AFTER INSERT ON measurements WHEN NEW.batch IS NULL BEGIN
    INSERT INTO measurement_stamps (project_id, hole_id, stamp) VALUES (NEW.project_id, NEW.hole_id, 1)
        ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = stamp + 1;
END;
-- An update that changes none of the values a report reads (the commit of
-- an import batch touches its rows for the change log) moves nothing: the
-- batch's commit moves the stamp once.
CREATE TRIGGER measurement_stamp_update AFTER UPDATE ON measurements
WHEN OLD.project_id IS NOT NEW.project_id OR OLD.hole_id IS NOT NEW.hole_id OR OLD.depth IS NOT NEW.depth
    OR OLD.alpha IS NOT NEW.alpha OR OLD.beta IS NOT NEW.beta OR OLD.gamma IS NOT NEW.gamma
    OR OLD.type_code IS NOT NEW.type_code OR OLD.apparent_thickness IS NOT NEW.apparent_thickness
    OR OLD.logged_by IS NOT NEW.logged_by OR OLD.logged_at IS NOT NEW.logged_at OR OLD.batch IS NOT NEW.batch
    OR OLD.version IS NOT NEW.version BEGIN
    INSERT INTO measurement_stamps (project_id, hole_id, stamp) VALUES (OLD.project_id, OLD.hole_id, 1)
        ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = stamp + 1;
    INSERT INTO measurement_stamps (project_id, hole_id, stamp) VALUES (NEW.project_id, NEW.hole_id, 1)
        ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = stamp + 1;
END;
CREATE TRIGGER measurement_stamp_delete AFTER DELETE ON measurements BEGIN
    INSERT INTO measurement_stamps (project_id, hole_id, stamp) VALUES (OLD.project_id, OLD.hole_id, 1)
        ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = stamp + 1;
END;
CREATE TRIGGER measurement_stamp_batch AFTER UPDATE OF committed ON import_batches WHEN NEW.committed <> OLD.committed BEGIN
    INSERT INTO measurement_stamps (project_id, hole_id, stamp) VALUES (NEW.project_id, 0, 1)
        ON CONFLICT (project_id, hole_id) DO UPDATE SET stamp = stamp + 1;
END;
