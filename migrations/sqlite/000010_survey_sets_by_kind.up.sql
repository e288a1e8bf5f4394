-- A hole's several survey sets, at most one of each kind (gyro, magnetic,
-- planned, other), beside the hole's survey set (survey_sets), which keeps
-- working as before. At most one set of a hole is preferred; without one,
-- the project's survey_priority (kinds separated by commas, '' for none)
-- chooses the set derived values are built from.
CREATE TABLE kind_survey_sets (
    hole_id     BIGINT NOT NULL REFERENCES holes (id) ON DELETE CASCADE,
    kind        TEXT NOT NULL CHECK (kind IN ('gyro', 'magnetic', 'planned', 'other')),
    instrument  TEXT NOT NULL DEFAULT 'unknown' CHECK (instrument IN ('magnetic', 'gyro', 'unknown')),
    azimuth_ref TEXT NOT NULL CHECK (azimuth_ref IN ('true', 'grid', 'magnetic')),
    survey_date TEXT NOT NULL DEFAULT '',
    declination REAL,
    preferred   INTEGER NOT NULL DEFAULT 0 CHECK (preferred IN (0, 1)),
    version     BIGINT NOT NULL DEFAULT 1,
    updated_at  INTEGER NOT NULL,
    PRIMARY KEY (hole_id, kind)
);

CREATE UNIQUE INDEX kind_survey_sets_one_preferred ON kind_survey_sets (hole_id) WHERE preferred = 1;

CREATE TABLE kind_survey_stations (
    hole_id BIGINT NOT NULL,
    kind    TEXT NOT NULL,
    depth   REAL NOT NULL,
    azimuth REAL NOT NULL,
    dip     REAL NOT NULL,
    PRIMARY KEY (hole_id, kind, depth),
    FOREIGN KEY (hole_id, kind) REFERENCES kind_survey_sets (hole_id, kind) ON DELETE CASCADE
);

ALTER TABLE projects ADD COLUMN survey_priority TEXT NOT NULL DEFAULT '';
