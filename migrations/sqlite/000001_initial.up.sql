-- Times are INTEGER microseconds since 1970-01-01 UTC.
CREATE TABLE projects (
    id                 INTEGER PRIMARY KEY AUTOINCREMENT,
    name               TEXT NOT NULL UNIQUE,
    description        TEXT NOT NULL DEFAULT '',
    ref_line           TEXT NOT NULL CHECK (ref_line IN ('bottom', 'top')),
    beta_apex          TEXT NOT NULL CHECK (beta_apex IN ('downhole', 'uphole')),
    gamma_sense        TEXT NOT NULL CHECK (gamma_sense IN ('clockwise', 'anticlockwise')),
    length_unit        TEXT NOT NULL CHECK (length_unit IN ('m', 'ft')),
    output_azimuth_ref TEXT NOT NULL CHECK (output_azimuth_ref IN ('grid', 'true')),
    declination        REAL NOT NULL DEFAULT 0,
    convergence        REAL NOT NULL DEFAULT 0,
    version            BIGINT NOT NULL DEFAULT 1,
    created_at         INTEGER NOT NULL,
    updated_at         INTEGER NOT NULL
);

CREATE TABLE type_codes (
    project_id  BIGINT NOT NULL REFERENCES projects (id) ON DELETE CASCADE,
    code        TEXT NOT NULL,
    description TEXT NOT NULL DEFAULT '',
    kind        TEXT NOT NULL DEFAULT 'plane' CHECK (kind IN ('plane', 'line')),
    PRIMARY KEY (project_id, code)
);

CREATE TABLE holes (
    id          INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id  BIGINT NOT NULL REFERENCES projects (id) ON DELETE CASCADE,
    name        TEXT NOT NULL,
    easting     REAL NOT NULL,
    northing    REAL NOT NULL,
    elevation   REAL NOT NULL,
    azimuth     REAL NOT NULL,
    azimuth_ref TEXT NOT NULL DEFAULT 'grid' CHECK (azimuth_ref IN ('true', 'grid', 'magnetic')),
    dip         REAL NOT NULL,
    final_depth REAL NOT NULL,
    crs         TEXT NOT NULL DEFAULT '',
    started     TEXT NOT NULL DEFAULT '',
    finished    TEXT NOT NULL DEFAULT '',
    version     BIGINT NOT NULL DEFAULT 1,
    created_at  INTEGER NOT NULL,
    updated_at  INTEGER NOT NULL,
    UNIQUE (project_id, name)
);

CREATE TABLE survey_sets (
    hole_id     BIGINT PRIMARY KEY REFERENCES holes (id) ON DELETE CASCADE,
    azimuth_ref TEXT NOT NULL CHECK (azimuth_ref IN ('true', 'grid', 'magnetic')),
    survey_date TEXT NOT NULL DEFAULT '',
    declination REAL,
    version     BIGINT NOT NULL DEFAULT 1,
    updated_at  INTEGER NOT NULL
);

CREATE TABLE survey_stations (
    hole_id BIGINT NOT NULL REFERENCES survey_sets (hole_id) ON DELETE CASCADE,
    depth   REAL NOT NULL,
    azimuth REAL NOT NULL,
    dip     REAL NOT NULL,
    PRIMARY KEY (hole_id, depth)
);

CREATE TABLE runs (
    id         INTEGER PRIMARY KEY AUTOINCREMENT,
    hole_id    BIGINT NOT NULL REFERENCES holes (id) ON DELETE CASCADE,
    from_depth REAL NOT NULL,
    to_depth   REAL NOT NULL,
    confidence TEXT NOT NULL,
    mismatch   REAL,
    comment    TEXT NOT NULL DEFAULT '',
    version    BIGINT NOT NULL DEFAULT 1,
    created_at INTEGER NOT NULL,
    updated_at INTEGER NOT NULL
);
CREATE INDEX runs_hole ON runs (hole_id, from_depth);

CREATE TABLE measurements (
    id                 INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id         BIGINT NOT NULL,
    hole_id            BIGINT NOT NULL REFERENCES holes (id) ON DELETE CASCADE,
    depth              REAL NOT NULL,
    alpha              REAL NOT NULL,
    beta               REAL NOT NULL,
    gamma              REAL,
    type_code          TEXT NOT NULL,
    apparent_thickness REAL,
    comment            TEXT NOT NULL DEFAULT '',
    logged_by          TEXT NOT NULL DEFAULT '',
    logged_at          INTEGER NOT NULL,
    version            BIGINT NOT NULL DEFAULT 1,
    created_at         INTEGER NOT NULL,
    updated_at         INTEGER NOT NULL,
    FOREIGN KEY (project_id, type_code) REFERENCES type_codes (project_id, code)
);
CREATE INDEX measurements_project ON measurements (project_id, id);
CREATE INDEX measurements_hole ON measurements (hole_id, depth);

CREATE TABLE audit_log (
    id         INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id BIGINT NOT NULL,
    actor      TEXT NOT NULL,
    token_id   BIGINT NOT NULL DEFAULT 0,
    entity     TEXT NOT NULL,
    entity_id  TEXT NOT NULL,
    action     TEXT NOT NULL CHECK (action IN ('create', 'update', 'delete')),
    at         INTEGER NOT NULL,
    before     TEXT,
    after      TEXT
);
CREATE INDEX audit_log_project ON audit_log (project_id, id);

CREATE TABLE api_tokens (
    id         INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id BIGINT REFERENCES projects (id) ON DELETE CASCADE, -- NULL: every project
    name       TEXT NOT NULL,
    role       TEXT NOT NULL CHECK (role IN ('read', 'log', 'admin')),
    hash       TEXT NOT NULL UNIQUE,
    created_at INTEGER NOT NULL
);

CREATE TABLE idempotency_keys (
    project_id   BIGINT NOT NULL REFERENCES projects (id) ON DELETE CASCADE,
    key          TEXT NOT NULL,
    request_hash TEXT NOT NULL,
    result       TEXT NOT NULL,
    created_at   INTEGER NOT NULL,
    PRIMARY KEY (project_id, key)
);
