-- Import batches: a large measurement import writes its rows in short
-- transactions, each row marked with its batch, and the rows stay invisible
-- to every read until the import's last transaction marks the batch
-- committed. lo_id and hi_id bound the ids of the batch's rows, so a batch
-- that is dropped (a bad row late in the file, a crashed process) is found
-- by the primary key without an index of its own.
CREATE TABLE import_batches (
    id         INTEGER PRIMARY KEY AUTOINCREMENT,
    project_id BIGINT NOT NULL,
    committed  INTEGER NOT NULL DEFAULT 0,
    lo_id      BIGINT,
    hi_id      BIGINT,
    touched_at INTEGER NOT NULL
);
ALTER TABLE measurements ADD COLUMN batch BIGINT;
