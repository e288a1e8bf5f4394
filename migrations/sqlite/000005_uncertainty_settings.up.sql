-- Project settings for how sure each orientation is: the error model (a JSON
-- object of standard errors in degrees, field names of package uncertainty;
-- '' means every default) and the persistent fabric (the type code QA's
-- fabric checks use when a request names none; '' when not set). A survey
-- set records the kind of instrument that made it.
ALTER TABLE projects ADD COLUMN error_model TEXT NOT NULL DEFAULT '';
ALTER TABLE projects ADD COLUMN persistent_fabric TEXT NOT NULL DEFAULT '';
ALTER TABLE survey_sets ADD COLUMN instrument TEXT NOT NULL DEFAULT 'unknown'
    CHECK (instrument IN ('magnetic', 'gyro', 'unknown'));
