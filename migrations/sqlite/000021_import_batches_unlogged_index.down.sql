DROP INDEX import_batches_unlogged;
