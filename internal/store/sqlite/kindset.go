package sqlite

import (
	"context"
	"database/sql"
	"errors"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectKindSets = `SELECT hole_id, kind, instrument, azimuth_ref, survey_date, declination, preferred, version, updated_at
	FROM kind_survey_sets WHERE hole_id = ? ORDER BY ` + storekit.KindOrder
	selectKindStations = `SELECT kind, depth, azimuth, dip FROM kind_survey_stations WHERE hole_id = ? ORDER BY kind, depth`
	kindSetVersion     = `SELECT version FROM kind_survey_sets WHERE hole_id = ? AND kind = ?`
	insertKindSet      = `INSERT INTO kind_survey_sets (hole_id, kind, instrument, azimuth_ref, survey_date, declination, preferred, version, updated_at)
	VALUES (?, ?, ?, ?, ?, ?, ?, 1, ?)`
	updateKindSet = `UPDATE kind_survey_sets SET instrument = ?, azimuth_ref = ?, survey_date = ?, declination = ?, preferred = ?,
	version = version + 1, updated_at = ? WHERE hole_id = ? AND kind = ? AND version = ? RETURNING version`
	unpreferOthers     = `UPDATE kind_survey_sets SET preferred = 0, version = version + 1, updated_at = ? WHERE hole_id = ? AND kind <> ? AND preferred = 1`
	deleteKindStations = `DELETE FROM kind_survey_stations WHERE hole_id = ? AND kind = ?`
	insertKindStation  = `INSERT INTO kind_survey_stations (hole_id, kind, depth, azimuth, dip) VALUES (?, ?, ?, ?, ?)`
	deleteKindSet      = `DELETE FROM kind_survey_sets WHERE hole_id = ? AND kind = ? AND version = ?`
)

// ListKindSets returns the hole's survey sets by kind, from one snapshot.
func (s *Store) ListKindSets(ctx context.Context, holeID int64) ([]domain.KindSet, error) {
	q := s.read()
	if s.tx == nil {
		tx, err := s.r.BeginTx(ctx, &sql.TxOptions{ReadOnly: true})
		if err != nil {
			return nil, translate(err)
		}
		defer tx.Rollback()
		q = tx
	}
	rows, err := q.QueryContext(ctx, selectKindSets, holeID)
	if err != nil {
		return nil, translate(err)
	}
	sets, err := collect(rows, func(r scanner) (domain.KindSet, error) {
		var k domain.KindSet
		var decl sql.NullFloat64
		var u int64
		err := r.Scan(&k.HoleID, &k.Kind, &k.Instrument, &k.AzimuthRef, &k.SurveyDate, &decl, &k.Preferred, &k.Version, &u)
		k.Declination, k.UpdatedAt, k.Stations = floatPtr(decl), fromMicro(u), []domain.Station{}
		return k, err
	})
	if err != nil {
		return nil, err
	}
	rows, err = q.QueryContext(ctx, selectKindStations, holeID)
	if err != nil {
		return nil, translate(err)
	}
	type kst struct {
		kind string
		st   domain.Station
	}
	sts, err := collect(rows, func(r scanner) (kst, error) {
		var x kst
		err := r.Scan(&x.kind, &x.st.Depth, &x.st.Azimuth, &x.st.Dip)
		return x, err
	})
	if err != nil {
		return nil, err
	}
	for _, x := range sts {
		for i := range sets {
			if sets[i].Kind == x.kind {
				sets[i].Stations = append(sets[i].Stations, x.st)
			}
		}
	}
	return sets, nil
}

// PutKindSet replaces the hole's set of k.Kind in one transaction.
func (s *Store) PutKindSet(ctx context.Context, k *domain.KindSet, ifVersion int64) error {
	k.Instrument = storekit.Instrument(k.Instrument)
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		if k.Preferred {
			if _, err := q.ExecContext(ctx, unpreferOthers, micro(t), k.HoleID, k.Kind); err != nil {
				return translate(err)
			}
		}
		var cur int64
		err := q.QueryRowContext(ctx, kindSetVersion, k.HoleID, k.Kind).Scan(&cur)
		switch {
		case err == sql.ErrNoRows:
			if ifVersion != 0 {
				return storekit.KindSetMissing(k.HoleID, k.Kind, ifVersion)
			}
			if _, err := q.ExecContext(ctx, insertKindSet, k.HoleID, k.Kind, k.Instrument, k.AzimuthRef, k.SurveyDate, storekit.NullFloat(k.Declination), k.Preferred, micro(t)); err != nil {
				return storekit.SurveyCreateFailed(translate(err), violation(err), k.HoleID)
			}
			k.Version = 1
		case err != nil:
			return translate(err)
		default:
			if ifVersion != cur {
				return storekit.KindSetStale(k.HoleID, k.Kind, cur, ifVersion)
			}
			if err := q.QueryRowContext(ctx, updateKindSet, k.Instrument, k.AzimuthRef, k.SurveyDate, storekit.NullFloat(k.Declination), k.Preferred, micro(t), k.HoleID, k.Kind, ifVersion).Scan(&k.Version); err != nil {
				if errors.Is(err, sql.ErrNoRows) {
					return storekit.KindSetMissing(k.HoleID, k.Kind, ifVersion)
				}
				return translate(err)
			}
			if _, err := q.ExecContext(ctx, deleteKindStations, k.HoleID, k.Kind); err != nil {
				return translate(err)
			}
		}
		for _, st := range k.Stations {
			if _, err := q.ExecContext(ctx, insertKindStation, k.HoleID, k.Kind, st.Depth, st.Azimuth, st.Dip); err != nil {
				return translate(err)
			}
		}
		k.UpdatedAt = t
		return nil
	})
}

// DeleteKindSet removes the hole's set of the kind.
func (s *Store) DeleteKindSet(ctx context.Context, holeID int64, kind string, ifVersion int64) error {
	return s.write(ctx, func(q querier) error {
		res, err := q.ExecContext(ctx, deleteKindSet, holeID, kind, ifVersion)
		if err != nil {
			return translate(err)
		}
		if n, _ := res.RowsAffected(); n > 0 {
			return nil
		}
		var cur int64
		err = q.QueryRowContext(ctx, kindSetVersion, holeID, kind).Scan(&cur)
		if err == sql.ErrNoRows {
			return storekit.NotFound(kind+" survey of hole", holeID)
		}
		if err != nil {
			return translate(err)
		}
		return storekit.KindSetStale(holeID, kind, cur, ifVersion)
	})
}
