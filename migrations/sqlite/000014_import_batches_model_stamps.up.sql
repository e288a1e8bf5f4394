-- Import batches: a large measurement import writes its rows in short
-- transactions, each row marked with its batch, and the rows stay invisible
-- to every read until the import's last transaction marks the batch
-- committed. lo_id and hi_id bound the ids of the batch's rows, so a batch
-- that is dropped (a bad row late in the file, a crashed process) is found
-- by the primary key without an index of its own.
CREATE TABLE import_batches (
    id         INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id BIGINT NOT NULL,
    committed  INTEGER NOT NULL DEFAULT 0,
    lo_id      BIGINT,
    hi_id      BIGINT,
    touched_at INTEGER NOT NULL
);
ALTER TABLE measurements ADD COLUMN batch BIGINT;

-- Model stamps: a counter per project that moves on every change of what a
-- hole model is built from (the project's settings, its holes, survey sets
-- and stations, survey sets by kind, orientation runs), whoever writes it.
-- The service keeps hole models between requests and rebuilds them when
-- the stamp it read differs from the one they were built at.
CREATE TABLE model_stamps (
    project_id BIGINT PRIMARY KEY,
    stamp      BIGINT NOT NULL DEFAULT 0
);
INSERT INTO model_stamps (project_id) SELECT id FROM projects;
CREATE TRIGGER model_stamp_project_insert AFTER INSERT ON projects BEGIN
    INSERT INTO model_stamps (project_id) VALUES (NEW.id);
END;
CREATE TRIGGER model_stamp_project_update AFTER UPDATE ON projects BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = NEW.id;
END;
CREATE TRIGGER model_stamp_project_delete AFTER DELETE ON projects BEGIN
    DELETE FROM model_stamps WHERE project_id = OLD.id;
END;
CREATE TRIGGER model_stamp_holes_insert AFTER INSERT ON holes BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = NEW.project_id;
END;
CREATE TRIGGER model_stamp_holes_update AFTER UPDATE ON holes BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = NEW.project_id;
END;
CREATE TRIGGER model_stamp_holes_delete AFTER DELETE ON holes BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = OLD.project_id;
END;
CREATE TRIGGER model_stamp_survey_sets_insert AFTER INSERT ON survey_sets BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_survey_sets_update AFTER UPDATE ON survey_sets BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_survey_sets_delete AFTER DELETE ON survey_sets BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = OLD.hole_id);
END;
CREATE TRIGGER model_stamp_survey_stations_insert AFTER INSERT ON survey_stations BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_survey_stations_update AFTER UPDATE ON survey_stations BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_survey_stations_delete AFTER DELETE ON survey_stations BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = OLD.hole_id);
END;
CREATE TRIGGER model_stamp_kind_survey_sets_insert AFTER INSERT ON kind_survey_sets BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_kind_survey_sets_update AFTER UPDATE ON kind_survey_sets BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_kind_survey_sets_delete AFTER DELETE ON kind_survey_sets BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = OLD.hole_id);
END;
CREATE TRIGGER model_stamp_kind_survey_stations_insert AFTER INSERT ON kind_survey_stations BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_kind_survey_stations_update AFTER UPDATE ON kind_survey_stations BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_kind_survey_stations_delete AFTER DELETE ON kind_survey_stations BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = OLD.hole_id);
END;
CREATE TRIGGER model_stamp_runs_insert AFTER INSERT ON runs BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_runs_update AFTER UPDATE ON runs BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = NEW.hole_id);
END;
CREATE TRIGGER model_stamp_runs_delete AFTER DELETE ON runs BEGIN
    UPDATE model_stamps SET stamp = stamp + 1 WHERE project_id = (SELECT project_id FROM holes WHERE id = OLD.hole_id);
END;
