DROP TRIGGER model_stamp ON projects;
DROP TRIGGER model_stamp ON holes;
DROP TRIGGER model_stamp ON survey_sets;
DROP TRIGGER model_stamp ON survey_stations;
DROP TRIGGER model_stamp ON kind_survey_sets;
DROP TRIGGER model_stamp ON kind_survey_stations;
DROP TRIGGER model_stamp ON runs;
DROP FUNCTION model_stamp_project();
DROP FUNCTION model_stamp_hole();
DROP FUNCTION model_stamp_hole_part();
DROP TABLE model_stamps;
-- Rows of imports that never committed go with their batches.
DELETE FROM measurements WHERE batch IN (SELECT id FROM import_batches WHERE NOT committed);
ALTER TABLE measurements DROP COLUMN batch;
DROP TABLE import_batches;
