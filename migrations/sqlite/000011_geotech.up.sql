-- Unoriented measurements: core without an orientation mark gives alpha but
-- no beta. beta becomes optional (NULL: unoriented). SQLite cannot drop NOT
-- NULL in place: the column is copied into a nullable one of the same name.
ALTER TABLE measurements ADD COLUMN beta_optional REAL;
UPDATE measurements SET beta_optional = beta;
ALTER TABLE measurements DROP COLUMN beta;
ALTER TABLE measurements RENAME COLUMN beta_optional TO beta;

-- Core intervals logged for rock-mass quality, per hole. A hole's intervals
-- are replaced as a whole. Optional lengths and counts are NULL when not
-- logged; pieces are the lengths of the pieces between natural breaks
-- separated by ';' ('' when not logged).
CREATE TABLE core_intervals (
    id             INTEGER PRIMARY KEY AUTOINCREMENT,
    hole_id        BIGINT NOT NULL REFERENCES holes (id) ON DELETE CASCADE,
    from_depth     REAL NOT NULL,
    to_depth       REAL NOT NULL,
    recovered      REAL,
    solid          REAL,
    sound          REAL,
    pieces         TEXT NOT NULL DEFAULT '',
    natural_breaks INTEGER,
    induced_breaks INTEGER,
    confidence     TEXT NOT NULL DEFAULT '',
    CHECK (from_depth < to_depth)
);
CREATE INDEX core_intervals_hole ON core_intervals (hole_id, from_depth);
