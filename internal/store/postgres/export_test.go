package postgres

// SchemaOf is the migrator of the database at addr, for tests.
var SchemaOf = schema
