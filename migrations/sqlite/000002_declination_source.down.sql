ALTER TABLE survey_sets DROP COLUMN declination_source;
