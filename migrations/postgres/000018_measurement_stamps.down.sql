DROP TRIGGER measurement_stamp ON import_batches;
DROP TRIGGER measurement_stamp ON measurements;
DROP TRIGGER measurement_stamp_insert ON measurements;
DROP TRIGGER measurement_stamp_update ON measurements;
DROP FUNCTION measurement_stamp();
DROP FUNCTION measurement_stamp_bump(BIGINT, BIGINT);
DROP TABLE measurement_stamps;
