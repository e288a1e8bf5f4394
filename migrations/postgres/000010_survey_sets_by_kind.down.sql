ALTER TABLE projects DROP COLUMN survey_priority;
DROP TABLE kind_survey_stations;
DROP TABLE kind_survey_sets;
