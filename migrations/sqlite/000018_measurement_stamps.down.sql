DROP TRIGGER measurement_stamp_insert;
DROP TRIGGER measurement_stamp_update;
DROP TRIGGER measurement_stamp_delete;
DROP TRIGGER measurement_stamp_batch;
DROP TABLE measurement_stamps;
