-- The magnetic model that computes a project's declinations: 'auto' (the
-- World Magnetic Model for the dates it covers, 2025.0-2030.0, and IGRF-14
-- before, back to 1900.0), 'wmm' or 'igrf'. Projects stored before this
-- column existed were computed with the WMM, which 'auto' still uses for
-- every date the WMM covers.
ALTER TABLE projects ADD COLUMN magnetic_model TEXT NOT NULL DEFAULT 'auto'
    CHECK (magnetic_model IN ('auto', 'wmm', 'igrf'));
-- The project's local (mine) grid as a JSON document (package localgrid's
-- Spec: the projected grid it relates to and either rotation, scale and
-- origin or control points); '' when the project declares none.
ALTER TABLE projects ADD COLUMN local_grid TEXT NOT NULL DEFAULT '';
