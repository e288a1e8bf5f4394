-- Sync: every record that sync carries gets a global id, made where the
-- row is created (the store makes a UUID; rows already here get a random
-- version 4 UUID now), so rows made on two machines never collide. Type
-- codes are known by their code, survey sets by their hole's global id, and
-- survey sets by kind by it and their kind ("<hole global id>/gyro");
-- type codes get the version counter the other records have.
--
-- change_log is written by triggers in the transaction of each change, so
-- no write path (imports, bulk loads, cascading deletes) can miss it. A
-- delete leaves its tombstone here. origin and actor come from the one row
-- of change_source, which the store sets for the length of a transaction
-- that applies changes received from elsewhere (sync) and resets before it
-- commits; '' means made here.

ALTER TABLE holes ADD COLUMN global_id TEXT;
UPDATE holes SET global_id = (lower(hex(randomblob(4))) || '-' || lower(hex(randomblob(2))) || '-4' || substr(lower(hex(randomblob(2))), 2) || '-' || substr('89ab', 1 + (abs(random()) % 4), 1) || substr(lower(hex(randomblob(2))), 2) || '-' || lower(hex(randomblob(6))));
CREATE UNIQUE INDEX holes_global_id ON holes (global_id);

ALTER TABLE runs ADD COLUMN global_id TEXT;
UPDATE runs SET global_id = (lower(hex(randomblob(4))) || '-' || lower(hex(randomblob(2))) || '-4' || substr(lower(hex(randomblob(2))), 2) || '-' || substr('89ab', 1 + (abs(random()) % 4), 1) || substr(lower(hex(randomblob(2))), 2) || '-' || lower(hex(randomblob(6))));
CREATE UNIQUE INDEX runs_global_id ON runs (global_id);

ALTER TABLE measurements ADD COLUMN global_id TEXT;
UPDATE measurements SET global_id = (lower(hex(randomblob(4))) || '-' || lower(hex(randomblob(2))) || '-4' || substr(lower(hex(randomblob(2))), 2) || '-' || substr('89ab', 1 + (abs(random()) % 4), 1) || substr(lower(hex(randomblob(2))), 2) || '-' || lower(hex(randomblob(6))));
CREATE UNIQUE INDEX measurements_global_id ON measurements (global_id);

ALTER TABLE type_codes ADD COLUMN version BIGINT NOT NULL DEFAULT 1;

CREATE TABLE change_log (
    seq        INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id BIGINT,
    hole_id    BIGINT,
    tbl        TEXT NOT NULL,
    global_id  TEXT NOT NULL,
    op         TEXT NOT NULL CHECK (op IN ('create', 'update', 'delete')),
    version    BIGINT NOT NULL,
    origin     TEXT NOT NULL DEFAULT '',
    actor      TEXT NOT NULL DEFAULT '',
    at         INTEGER NOT NULL
);
CREATE INDEX change_log_project ON change_log (project_id, seq);
CREATE INDEX change_log_record ON change_log (tbl, global_id, seq);
CREATE INDEX change_log_origin ON change_log (origin, seq);

CREATE TABLE change_source (
    k      INTEGER PRIMARY KEY CHECK (k = 1),
    origin TEXT NOT NULL,
    actor  TEXT NOT NULL
);
INSERT INTO change_source (k, origin, actor) VALUES (1, '', '');

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, at)
    SELECT type_codes.project_id, NULL, 'type_codes', type_codes.code, 'create', version, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM type_codes;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, at)
    SELECT holes.project_id, holes.id, 'holes', holes.global_id, 'create', version, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM holes;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, at)
    SELECT (SELECT project_id FROM holes WHERE id = survey_sets.hole_id), survey_sets.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = survey_sets.hole_id), 'create', version, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM survey_sets;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, at)
    SELECT (SELECT project_id FROM holes WHERE id = kind_survey_sets.hole_id), kind_survey_sets.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = kind_survey_sets.hole_id) || '/' || kind_survey_sets.kind, 'create', version, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM kind_survey_sets;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, at)
    SELECT (SELECT project_id FROM holes WHERE id = runs.hole_id), runs.hole_id, 'runs', runs.global_id, 'create', version, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM runs;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, at)
    SELECT measurements.project_id, measurements.hole_id, 'measurements', measurements.global_id, 'create', version, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM measurements;

CREATE TRIGGER type_codes_log_insert AFTER INSERT ON type_codes BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NULL, 'type_codes', NEW.code, 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER type_codes_log_update AFTER UPDATE ON type_codes BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NULL, 'type_codes', NEW.code, 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER type_codes_log_delete AFTER DELETE ON type_codes BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT OLD.project_id, NULL, 'type_codes', OLD.code, 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER holes_log_insert AFTER INSERT ON holes BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NEW.id, 'holes', NEW.global_id, 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER holes_log_update AFTER UPDATE ON holes BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT NEW.project_id, NEW.id, 'holes', NEW.global_id, 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER holes_log_delete AFTER DELETE ON holes BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT OLD.project_id, OLD.id, 'holes', OLD.global_id, 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER survey_sets_log_insert AFTER INSERT ON survey_sets WHEN (SELECT global_id FROM holes WHERE id = NEW.hole_id) IS NOT NULL BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id), 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER survey_sets_log_update AFTER UPDATE ON survey_sets WHEN (SELECT global_id FROM holes WHERE id = NEW.hole_id) IS NOT NULL BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id), 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER survey_sets_log_delete AFTER DELETE ON survey_sets WHEN (SELECT global_id FROM holes WHERE id = OLD.hole_id) IS NOT NULL BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = OLD.hole_id), OLD.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = OLD.hole_id), 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER runs_log_insert AFTER INSERT ON runs BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'runs', NEW.global_id, 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER runs_log_update AFTER UPDATE ON runs BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'runs', NEW.global_id, 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER runs_log_delete AFTER DELETE ON runs BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = OLD.hole_id), OLD.hole_id, 'runs', OLD.global_id, 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

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

CREATE TRIGGER kind_survey_sets_log_insert AFTER INSERT ON kind_survey_sets WHEN (SELECT global_id FROM holes WHERE id = NEW.hole_id) || '/' || NEW.kind IS NOT NULL BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id) || '/' || NEW.kind, 'create', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER kind_survey_sets_log_update AFTER UPDATE ON kind_survey_sets WHEN (SELECT global_id FROM holes WHERE id = NEW.hole_id) || '/' || NEW.kind IS NOT NULL BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id) || '/' || NEW.kind, 'update', NEW.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;

CREATE TRIGGER kind_survey_sets_log_delete AFTER DELETE ON kind_survey_sets WHEN (SELECT global_id FROM holes WHERE id = OLD.hole_id) || '/' || OLD.kind IS NOT NULL BEGIN
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor, at)
    SELECT (SELECT project_id FROM holes WHERE id = OLD.hole_id), OLD.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = OLD.hole_id) || '/' || OLD.kind, 'delete', OLD.version, origin, actor, CAST((julianday('now') - 2440587.5) * 86400000000 AS INTEGER) FROM change_source;
END;
