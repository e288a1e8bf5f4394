ALTER TABLE holes DROP COLUMN local_grid;
