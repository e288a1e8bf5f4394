-- Per-hole north corrections and survey date, read from the collars file and
-- the API: a declination and a grid convergence given for the hole (NULL when
-- not given) and the date of the hole's survey ('' when unknown).
ALTER TABLE holes ADD COLUMN declination REAL
    CHECK (declination IS NULL OR declination BETWEEN -180 AND 180);
ALTER TABLE holes ADD COLUMN grid_convergence REAL
    CHECK (grid_convergence IS NULL OR grid_convergence BETWEEN -90 AND 90);
ALTER TABLE holes ADD COLUMN survey_date TEXT NOT NULL DEFAULT '';

-- The project's default declination and convergence are unset (NULL) until
-- someone sets them. Backfill: 0 was the column default and cannot be told
-- apart from a chosen 0, so a stored 0 becomes unset; any other value was
-- set by someone and is kept. SQLite cannot drop NOT NULL in place: the
-- columns are copied into nullable ones of the same name.
ALTER TABLE projects ADD COLUMN declination_default REAL;
ALTER TABLE projects ADD COLUMN convergence_default REAL;
UPDATE projects SET declination_default = NULLIF(declination, 0), convergence_default = NULLIF(convergence, 0);
ALTER TABLE projects DROP COLUMN declination;
ALTER TABLE projects DROP COLUMN convergence;
ALTER TABLE projects RENAME COLUMN declination_default TO declination;
ALTER TABLE projects RENAME COLUMN convergence_default TO convergence;

-- A declination the magnetic model gives is computed on every read by the
-- hole model, never stored: sets that stored one when they were written
-- forget it (the same value comes back, computed, and follows the collar).
UPDATE survey_sets SET declination = NULL, declination_source = '' WHERE declination_source = 'computed';
