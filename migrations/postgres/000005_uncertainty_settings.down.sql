ALTER TABLE survey_sets DROP COLUMN instrument;
ALTER TABLE projects DROP COLUMN persistent_fabric;
ALTER TABLE projects DROP COLUMN error_model;
