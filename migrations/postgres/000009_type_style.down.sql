ALTER TABLE type_codes DROP COLUMN mark;
ALTER TABLE type_codes DROP COLUMN colour;
