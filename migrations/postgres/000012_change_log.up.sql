-- Sync: every record that sync carries gets a global id, made where the
-- row is created (the store makes a UUID; rows already here get a random
-- UUID now), so rows made on two machines never collide. Type codes are
-- known by their code, survey sets by their hole's global id and survey
-- sets by kind by it and their kind ("<hole global id>/gyro"); type codes
-- get the version counter the other records have.
--
-- change_log is written by triggers in the transaction of each change, so
-- no write path (imports, COPY, cascading deletes) can miss it. A delete
-- leaves its tombstone here. origin and actor come from the transaction's
-- settings corvane.origin and corvane.actor, which the store sets in a
-- transaction that applies changes received from elsewhere (sync); ''
-- means made here. Each logging transaction takes an advisory lock of its
-- project until it ends, so the order of seq is the order of commits within
-- a project: a reader paging by seq never skips a change that commits late.

ALTER TABLE holes ADD COLUMN global_id TEXT;
UPDATE holes SET global_id = gen_random_uuid()::text;
ALTER TABLE holes ALTER COLUMN global_id SET NOT NULL;
ALTER TABLE holes ALTER COLUMN global_id SET DEFAULT gen_random_uuid()::text; -- rows loaded around the store
CREATE UNIQUE INDEX holes_global_id ON holes (global_id);

ALTER TABLE runs ADD COLUMN global_id TEXT;
UPDATE runs SET global_id = gen_random_uuid()::text;
ALTER TABLE runs ALTER COLUMN global_id SET NOT NULL;
ALTER TABLE runs ALTER COLUMN global_id SET DEFAULT gen_random_uuid()::text; -- rows loaded around the store
CREATE UNIQUE INDEX runs_global_id ON runs (global_id);

ALTER TABLE measurements ADD COLUMN global_id TEXT;
UPDATE measurements SET global_id = gen_random_uuid()::text;
ALTER TABLE measurements ALTER COLUMN global_id SET NOT NULL;
ALTER TABLE measurements ALTER COLUMN global_id SET DEFAULT gen_random_uuid()::text; -- rows loaded around the store
CREATE UNIQUE INDEX measurements_global_id ON measurements (global_id);

ALTER TABLE type_codes ADD COLUMN version BIGINT NOT NULL DEFAULT 1;

CREATE TABLE change_log (
    seq        BIGSERIAL PRIMARY KEY,
    project_id BIGINT,
    hole_id    BIGINT,
    tbl        TEXT NOT NULL,
    global_id  TEXT NOT NULL,
    op         TEXT NOT NULL CHECK (op IN ('create', 'update', 'delete')),
    version    BIGINT NOT NULL,
    origin     TEXT NOT NULL DEFAULT '',
    actor      TEXT NOT NULL DEFAULT '',
    at         TIMESTAMPTZ NOT NULL DEFAULT now()
);
CREATE INDEX change_log_project ON change_log (project_id, seq);
CREATE INDEX change_log_record ON change_log (tbl, global_id, seq);
CREATE INDEX change_log_origin ON change_log (origin, seq);

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
    SELECT type_codes.project_id, NULL, 'type_codes', type_codes.code, 'create', version FROM type_codes ORDER BY version;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
    SELECT holes.project_id, holes.id, 'holes', holes.global_id, 'create', version FROM holes ORDER BY version;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
    SELECT (SELECT project_id FROM holes WHERE id = survey_sets.hole_id), survey_sets.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = survey_sets.hole_id), 'create', version FROM survey_sets ORDER BY version;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
    SELECT (SELECT project_id FROM holes WHERE id = kind_survey_sets.hole_id), kind_survey_sets.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = kind_survey_sets.hole_id) || '/' || kind_survey_sets.kind, 'create', version FROM kind_survey_sets ORDER BY version;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
    SELECT (SELECT project_id FROM holes WHERE id = runs.hole_id), runs.hole_id, 'runs', runs.global_id, 'create', version FROM runs ORDER BY version;

INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version)
    SELECT measurements.project_id, measurements.hole_id, 'measurements', measurements.global_id, 'create', version FROM measurements ORDER BY version;

CREATE FUNCTION corvane_log(p_project BIGINT, p_hole BIGINT, p_tbl TEXT, p_gid TEXT, p_op TEXT, p_version BIGINT) RETURNS void AS $$
BEGIN
    IF p_gid IS NULL THEN
        RETURN;
    END IF;
    PERFORM pg_advisory_xact_lock(1129467478, (COALESCE(p_project, 0) % 2147483647)::int);
    INSERT INTO change_log (project_id, hole_id, tbl, global_id, op, version, origin, actor)
    VALUES (p_project, p_hole, p_tbl, p_gid, p_op, p_version,
            COALESCE(current_setting('corvane.origin', true), ''), COALESCE(current_setting('corvane.actor', true), ''));
END
$$ LANGUAGE plpgsql;

CREATE FUNCTION type_codes_log() RETURNS trigger AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        PERFORM corvane_log(OLD.project_id, NULL, 'type_codes', OLD.code, 'delete', OLD.version);
        RETURN OLD;
    ELSIF TG_OP = 'INSERT' THEN
        PERFORM corvane_log(NEW.project_id, NULL, 'type_codes', NEW.code, 'create', NEW.version);
    ELSE
        PERFORM corvane_log(NEW.project_id, NULL, 'type_codes', NEW.code, 'update', NEW.version);
    END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
CREATE TRIGGER type_codes_log AFTER INSERT OR UPDATE OR DELETE ON type_codes FOR EACH ROW EXECUTE FUNCTION type_codes_log();

CREATE FUNCTION holes_log() RETURNS trigger AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        PERFORM corvane_log(OLD.project_id, OLD.id, 'holes', OLD.global_id, 'delete', OLD.version);
        RETURN OLD;
    ELSIF TG_OP = 'INSERT' THEN
        PERFORM corvane_log(NEW.project_id, NEW.id, 'holes', NEW.global_id, 'create', NEW.version);
    ELSE
        PERFORM corvane_log(NEW.project_id, NEW.id, 'holes', NEW.global_id, 'update', NEW.version);
    END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
CREATE TRIGGER holes_log AFTER INSERT OR UPDATE OR DELETE ON holes FOR EACH ROW EXECUTE FUNCTION holes_log();

CREATE FUNCTION survey_sets_log() RETURNS trigger AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = OLD.hole_id), OLD.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = OLD.hole_id), 'delete', OLD.version);
        RETURN OLD;
    ELSIF TG_OP = 'INSERT' THEN
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id), 'create', NEW.version);
    ELSE
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id), 'update', NEW.version);
    END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
CREATE TRIGGER survey_sets_log AFTER INSERT OR UPDATE OR DELETE ON survey_sets FOR EACH ROW EXECUTE FUNCTION survey_sets_log();

CREATE FUNCTION runs_log() RETURNS trigger AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = OLD.hole_id), OLD.hole_id, 'runs', OLD.global_id, 'delete', OLD.version);
        RETURN OLD;
    ELSIF TG_OP = 'INSERT' THEN
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'runs', NEW.global_id, 'create', NEW.version);
    ELSE
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'runs', NEW.global_id, 'update', NEW.version);
    END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
CREATE TRIGGER runs_log AFTER INSERT OR UPDATE OR DELETE ON runs FOR EACH ROW EXECUTE FUNCTION runs_log();

CREATE FUNCTION measurements_log() RETURNS trigger AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        PERFORM corvane_log(OLD.project_id, OLD.hole_id, 'measurements', OLD.global_id, 'delete', OLD.version);
        RETURN OLD;
    ELSIF TG_OP = 'INSERT' THEN
        PERFORM corvane_log(NEW.project_id, NEW.hole_id, 'measurements', NEW.global_id, 'create', NEW.version);
    ELSE
        PERFORM corvane_log(NEW.project_id, NEW.hole_id, 'measurements', NEW.global_id, 'update', NEW.version);
    END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
CREATE TRIGGER measurements_log AFTER INSERT OR UPDATE OR DELETE ON measurements FOR EACH ROW EXECUTE FUNCTION measurements_log();

CREATE FUNCTION kind_survey_sets_log() RETURNS trigger AS $$
BEGIN
    IF TG_OP = 'DELETE' THEN
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = OLD.hole_id), OLD.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = OLD.hole_id) || '/' || OLD.kind, 'delete', OLD.version);
        RETURN OLD;
    ELSIF TG_OP = 'INSERT' THEN
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id) || '/' || NEW.kind, 'create', NEW.version);
    ELSE
        PERFORM corvane_log((SELECT project_id FROM holes WHERE id = NEW.hole_id), NEW.hole_id, 'kind_survey_sets', (SELECT global_id FROM holes WHERE id = NEW.hole_id) || '/' || NEW.kind, 'update', NEW.version);
    END IF;
    RETURN NEW;
END
$$ LANGUAGE plpgsql;
CREATE TRIGGER kind_survey_sets_log AFTER INSERT OR UPDATE OR DELETE ON kind_survey_sets FOR EACH ROW EXECUTE FUNCTION kind_survey_sets_log();
