package postgres

import (
	"context"
	"errors"
	"time"

	"github.com/jackc/pgx/v5"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectKindSets = `SELECT hole_id, kind, instrument, azimuth_ref, survey_date, declination, preferred, version, updated_at
	FROM kind_survey_sets WHERE hole_id = $1 ORDER BY ` + storekit.KindOrder
	selectKindStations = `SELECT kind, depth, azimuth, dip FROM kind_survey_stations WHERE hole_id = $1 ORDER BY kind, depth`
	kindSetVersion     = `SELECT version FROM kind_survey_sets WHERE hole_id = $1 AND kind = $2`
	insertKindSet      = `INSERT INTO kind_survey_sets (hole_id, kind, instrument, azimuth_ref, survey_date, declination, preferred, version, updated_at)
	VALUES ($1, $2, $3, $4, $5, $6, $7, 1, $8)`
	updateKindSet = `UPDATE kind_survey_sets SET instrument = $1, azimuth_ref = $2, survey_date = $3, declination = $4, preferred = $5,
	version = version + 1, updated_at = $6 WHERE hole_id = $7 AND kind = $8 AND version = $9 RETURNING version`
	unpreferOthers     = `UPDATE kind_survey_sets SET preferred = false, version = version + 1, updated_at = $1 WHERE hole_id = $2 AND kind <> $3 AND preferred`
	deleteKindStations = `DELETE FROM kind_survey_stations WHERE hole_id = $1 AND kind = $2`
	insertKindStation  = `INSERT INTO kind_survey_stations (hole_id, kind, depth, azimuth, dip) VALUES ($1, $2, $3, $4, $5)`
	deleteKindSet      = `DELETE FROM kind_survey_sets WHERE hole_id = $1 AND kind = $2 AND version = $3`
)

// ListKindSets returns the hole's survey sets by kind, from one snapshot.
func (s *Store) ListKindSets(ctx context.Context, holeID int64) ([]domain.KindSet, error) {
	q := s.read()
	if s.tx == nil {
		tx, err := s.pool.BeginTx(ctx, pgx.TxOptions{IsoLevel: pgx.RepeatableRead, AccessMode: pgx.ReadOnly})
		if err != nil {
			return nil, translate(err)
		}
		defer tx.Rollback(context.WithoutCancel(ctx))
		q = tx
	}
	rows, err := q.Query(ctx, selectKindSets, holeID)
	if err != nil {
		return nil, translate(err)
	}
	sets, err := collect(rows, func(r scanner) (domain.KindSet, error) {
		var k domain.KindSet
		var u time.Time
		err := r.Scan(&k.HoleID, &k.Kind, &k.Instrument, &k.AzimuthRef, &k.SurveyDate, &k.Declination, &k.Preferred, &k.Version, &u)
		k.UpdatedAt, k.Stations = u.UTC(), []domain.Station{}
		return k, err
	})
	if err != nil {
		return nil, err
	}
	rows, err = q.Query(ctx, selectKindStations, holeID)
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
			if _, err := q.Exec(ctx, unpreferOthers, t, k.HoleID, k.Kind); err != nil {
				return translate(err)
			}
		}
		var cur int64
		err := q.QueryRow(ctx, kindSetVersion, k.HoleID, k.Kind).Scan(&cur)
		switch {
		case errors.Is(err, pgx.ErrNoRows):
			if ifVersion != 0 {
				return storekit.KindSetMissing(k.HoleID, k.Kind, ifVersion)
			}
			if _, err := q.Exec(ctx, insertKindSet, k.HoleID, k.Kind, k.Instrument, k.AzimuthRef, k.SurveyDate, storekit.NullFloat(k.Declination), k.Preferred, t); err != nil {
				return storekit.SurveyCreateFailed(translate(err), violation(err), k.HoleID)
			}
			k.Version = 1
		case err != nil:
			return translate(err)
		default:
			if ifVersion != cur {
				return storekit.KindSetStale(k.HoleID, k.Kind, cur, ifVersion)
			}
			if err := q.QueryRow(ctx, updateKindSet, k.Instrument, k.AzimuthRef, k.SurveyDate, storekit.NullFloat(k.Declination), k.Preferred, t, k.HoleID, k.Kind, ifVersion).Scan(&k.Version); err != nil {
				if errors.Is(err, pgx.ErrNoRows) {
					return storekit.KindSetMissing(k.HoleID, k.Kind, ifVersion)
				}
				return translate(err)
			}
			if _, err := q.Exec(ctx, deleteKindStations, k.HoleID, k.Kind); err != nil {
				return translate(err)
			}
		}
		for _, st := range k.Stations {
			if _, err := q.Exec(ctx, insertKindStation, k.HoleID, k.Kind, st.Depth, st.Azimuth, st.Dip); err != nil {
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
		res, err := q.Exec(ctx, deleteKindSet, holeID, kind, ifVersion)
		if err != nil {
			return translate(err)
		}
		if res.RowsAffected() > 0 {
			return nil
		}
		var cur int64
		err = q.QueryRow(ctx, kindSetVersion, holeID, kind).Scan(&cur)
		if errors.Is(err, pgx.ErrNoRows) {
			return storekit.NotFound(kind+" survey of hole", holeID)
		}
		if err != nil {
			return translate(err)
		}
		return storekit.KindSetStale(holeID, kind, cur, ifVersion)
	})
}
