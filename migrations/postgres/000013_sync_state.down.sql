DROP TABLE sync_conflicts;
DROP TABLE sync_bases;
DROP TABLE sync_cursors;
