package service

import (
	"context"
)

// logChunk is the number of an import batch's rows whose change log entries
// one transaction writes.
const logChunk = 5000

// An import's rows become visible in its last transaction; their change log
// entries (what sync carries) are written after it, logChunk rows per
// transaction, so that other writers wait for one chunk at most and never
// for the log of a whole file. The import starts this in the background as
// it commits; every reader of the change log (the sync routes, a sync push)
// first writes what is still owed for its project, and serve does it for
// all projects as it starts, after a process that stopped half way.

// logLater logs the committed batch in the background.
func (s *Service) logLater(batch int64) {
	s.logging.Add(1)
	go func() {
		defer s.logging.Done()
		if err := s.logBatch(context.Background(), batch); err != nil {
			s.log.Error("writing the change log of an import (the next reader of the change log finishes it)", "batch", batch, "error", err)
		}
	}()
}

// logBatch writes the change log entries still owed for a committed batch.
func (s *Service) logBatch(ctx context.Context, batch int64) error {
	for {
		more, err := s.store.LogBatch(ctx, batch, logChunk)
		if err != nil || !more {
			return err
		}
	}
}

// LogPending writes the change log entries still owed for the committed
// import batches of the project (every project for 0).
func (s *Service) LogPending(ctx context.Context, projectID int64) error {
	ids, err := s.store.UnloggedBatches(ctx, projectID)
	if err != nil {
		return err
	}
	for _, id := range ids {
		if err := s.logBatch(ctx, id); err != nil {
			return err
		}
	}
	return nil
}

// WaitLogging waits until the change log entries the imports of this
// Service started writing in the background are written (or failed).
func (s *Service) WaitLogging() { s.logging.Wait() }
