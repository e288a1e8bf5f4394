package sqlite

// SetBusyTimeout shortens the lock wait for a test and returns the undo.
func SetBusyTimeout(ms int) (restore func()) {
	old := busyTimeoutMS
	busyTimeoutMS = ms
	return func() { busyTimeoutMS = old }
}

// UnloggedBatchesSQL is the query of Store.UnloggedBatches.
const UnloggedBatchesSQL = unloggedBatchesSQL
