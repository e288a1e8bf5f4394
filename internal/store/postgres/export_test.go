package postgres

// SchemaOf is the migrator of the database at addr, for tests.
var SchemaOf = schema

// PoolMax is the most connections s keeps open.
func PoolMax(s *Store) int { return int(s.pool.Config().MaxConns) }

// UnloggedBatchesSQL is the query of Store.UnloggedBatches.
const UnloggedBatchesSQL = unloggedBatchesSQL
