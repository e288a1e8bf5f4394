-- Unoriented measurements: core without an orientation mark gives alpha but
-- no beta. beta becomes optional (NULL: unoriented).
ALTER TABLE measurements ALTER COLUMN beta DROP NOT NULL;

-- Core intervals logged for rock-mass quality, per hole. A hole's intervals
-- are replaced as a whole. Optional lengths and counts are NULL when not
-- logged; pieces are the lengths of the pieces between natural breaks
-- separated by ';' ('' when not logged).
CREATE TABLE core_intervals (
    id             BIGSERIAL PRIMARY KEY,
    hole_id        BIGINT NOT NULL REFERENCES holes (id) ON DELETE CASCADE,
    from_depth     DOUBLE PRECISION NOT NULL,
    to_depth       DOUBLE PRECISION NOT NULL,
    recovered      DOUBLE PRECISION,
    solid          DOUBLE PRECISION,
    sound          DOUBLE PRECISION,
    pieces         TEXT NOT NULL DEFAULT '',
    natural_breaks INTEGER,
    induced_breaks INTEGER,
    confidence     TEXT NOT NULL DEFAULT '',
    CHECK (from_depth < to_depth)
);
CREATE INDEX core_intervals_hole ON core_intervals (hole_id, from_depth);
