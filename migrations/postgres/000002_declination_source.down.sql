ALTER TABLE survey_sets DROP COLUMN IF EXISTS declination_source;
