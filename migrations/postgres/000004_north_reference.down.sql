ALTER TABLE projects DROP COLUMN local_grid;
ALTER TABLE projects DROP COLUMN magnetic_model;
