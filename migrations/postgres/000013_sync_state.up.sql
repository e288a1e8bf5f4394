-- Sync bookkeeping. sync_cursors: per remote service and project, the last
-- change of the remote pulled and applied here (pulled) and the last change
-- of this store pushed and acknowledged (pushed); holes is the hole
-- selection the pull cursor belongs to. sync_bases: per remote and record,
-- the version both sides last agreed on (a record whose version here differs
-- has local edits not yet pushed). sync_conflicts: a change pushed from
-- elsewhere that met a record moved on since its base (kind conflict), or a
-- change refused (kind refused), with both versions kept as JSON until a
-- person chooses; kept and resolved_by record the choice.
CREATE TABLE sync_cursors (
    remote     TEXT NOT NULL,
    project    TEXT NOT NULL,
    holes      TEXT NOT NULL DEFAULT '',
    pulled     BIGINT NOT NULL DEFAULT 0,
    pushed     BIGINT NOT NULL DEFAULT 0,
    replica    TEXT NOT NULL DEFAULT '',
    PRIMARY KEY (remote, project)
);

CREATE TABLE sync_bases (
    remote    TEXT NOT NULL,
    tbl       TEXT NOT NULL,
    global_id TEXT NOT NULL,
    version   BIGINT NOT NULL,
    PRIMARY KEY (remote, tbl, global_id)
);

CREATE TABLE sync_conflicts (
    id             TEXT PRIMARY KEY,
    project_id     BIGINT NOT NULL,
    kind           TEXT NOT NULL CHECK (kind IN ('conflict', 'refused')),
    tbl            TEXT NOT NULL,
    global_id      TEXT NOT NULL,
    replica        TEXT NOT NULL DEFAULT '',
    actor          TEXT NOT NULL DEFAULT '',
    base_version   BIGINT NOT NULL DEFAULT 0,
    local_version  BIGINT NOT NULL DEFAULT 0,
    remote_version BIGINT NOT NULL DEFAULT 0,
    local_data     TEXT NOT NULL DEFAULT '',
    remote_data    TEXT NOT NULL DEFAULT '',
    reason         TEXT NOT NULL DEFAULT '',
    status         TEXT NOT NULL CHECK (status IN ('open', 'resolved')),
    kept           TEXT NOT NULL DEFAULT '' CHECK (kept IN ('', 'local', 'remote')),
    resolved_by    TEXT NOT NULL DEFAULT '',
    created_at     TIMESTAMPTZ NOT NULL,
    resolved_at    TIMESTAMPTZ
);
CREATE INDEX sync_conflicts_project ON sync_conflicts (project_id, status, created_at);
CREATE INDEX sync_conflicts_record ON sync_conflicts (tbl, global_id);
