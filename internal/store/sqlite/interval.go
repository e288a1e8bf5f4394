package sqlite

import (
	"context"
	"database/sql"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectIntervals = `SELECT id, hole_id, from_depth, to_depth, recovered, solid, sound, pieces, natural_breaks, induced_breaks, confidence
	FROM core_intervals WHERE hole_id = ? ORDER BY from_depth, id`
	deleteIntervals = `DELETE FROM core_intervals WHERE hole_id = ?`
	insertInterval  = `INSERT INTO core_intervals (hole_id, from_depth, to_depth, recovered, solid, sound, pieces, natural_breaks, induced_breaks, confidence)
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id`
)

// ListCoreIntervals lists the hole's core intervals ordered by depth.
func (s *Store) ListCoreIntervals(ctx context.Context, holeID int64) ([]domain.CoreInterval, error) {
	rows, err := s.read().QueryContext(ctx, selectIntervals, holeID)
	if err != nil {
		return nil, translate(err)
	}
	return collect(rows, func(r scanner) (domain.CoreInterval, error) {
		var iv domain.CoreInterval
		var rec, sol, snd sql.NullFloat64
		var nat, ind sql.NullInt64
		var pieces string
		if err := r.Scan(&iv.ID, &iv.HoleID, &iv.From, &iv.To, &rec, &sol, &snd, &pieces, &nat, &ind, &iv.Confidence); err != nil {
			return iv, err
		}
		iv.Recovered, iv.Solid, iv.Sound = floatPtr(rec), floatPtr(sol), floatPtr(snd)
		iv.NaturalBreaks, iv.InducedBreaks = intPtr(nat), intPtr(ind)
		var err error
		iv.Pieces, err = storekit.SplitPieces(pieces)
		return iv, err
	})
}

func intPtr(n sql.NullInt64) *int {
	if !n.Valid {
		return nil
	}
	v := int(n.Int64)
	return &v
}

// PutCoreIntervals replaces the hole's core intervals in one transaction.
func (s *Store) PutCoreIntervals(ctx context.Context, holeID int64, ivs []domain.CoreInterval) error {
	return s.write(ctx, func(q querier) error {
		if _, err := q.ExecContext(ctx, deleteIntervals, holeID); err != nil {
			return translate(err)
		}
		for i := range ivs {
			iv := &ivs[i]
			iv.HoleID = holeID
			err := q.QueryRowContext(ctx, insertInterval, holeID, iv.From, iv.To, storekit.NullFloat(iv.Recovered), storekit.NullFloat(iv.Solid),
				storekit.NullFloat(iv.Sound), storekit.JoinPieces(iv.Pieces), storekit.NullInt(iv.NaturalBreaks), storekit.NullInt(iv.InducedBreaks),
				iv.Confidence).Scan(&iv.ID)
			if err != nil {
				return translate(err)
			}
		}
		return nil
	})
}
