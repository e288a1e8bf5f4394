-- Where a survey set's declination came from: 'given' (a number sent with
-- the set), 'computed' (from the magnetic model when the set was stored), or
-- '' when the set has no declination of its own. Sets stored before this
-- column existed kept the number they were sent with or computed, which can
-- no longer be told apart: they are recorded as given.
ALTER TABLE survey_sets ADD COLUMN declination_source TEXT NOT NULL DEFAULT ''
    CHECK (declination_source IN ('', 'given', 'computed'));
UPDATE survey_sets SET declination_source = 'given' WHERE declination IS NOT NULL;
