UPDATE projects SET declination = 0 WHERE declination IS NULL;
UPDATE projects SET convergence = 0 WHERE convergence IS NULL;
ALTER TABLE projects ALTER COLUMN declination SET DEFAULT 0;
ALTER TABLE projects ALTER COLUMN declination SET NOT NULL;
ALTER TABLE projects ALTER COLUMN convergence SET DEFAULT 0;
ALTER TABLE projects ALTER COLUMN convergence SET NOT NULL;
ALTER TABLE holes DROP COLUMN IF EXISTS survey_date;
ALTER TABLE holes DROP COLUMN IF EXISTS grid_convergence;
ALTER TABLE holes DROP COLUMN IF EXISTS declination;
