-- A hole's own local (mine) grid as a JSON document (package localgrid's
-- Spec, as the project's local_grid); '' when the hole has none and the
-- project's, if any, applies.
ALTER TABLE holes ADD COLUMN local_grid TEXT NOT NULL DEFAULT '';
