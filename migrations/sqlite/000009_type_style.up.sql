-- How each structure type is drawn in every view: a colour (#rrggbb) and a
-- mark (a shape name). Empty means "not chosen yet": the service gives such
-- types the next free default of the visual language on every read.
ALTER TABLE type_codes ADD COLUMN colour TEXT NOT NULL DEFAULT '';
ALTER TABLE type_codes ADD COLUMN mark TEXT NOT NULL DEFAULT '';
