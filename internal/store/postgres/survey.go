package postgres

import (
	"context"
	"errors"
	"github.com/jackc/pgx/v5"
	"time"

	"corvane/internal/domain"
	"corvane/internal/store/storekit"
)

const (
	selectSurveySet  = `SELECT hole_id, azimuth_ref, survey_date, declination, declination_source, instrument, version, updated_at FROM survey_sets WHERE hole_id = $1`
	selectStations   = `SELECT depth, azimuth, dip FROM survey_stations WHERE hole_id = $1 ORDER BY depth`
	insertSurveySet  = `INSERT INTO survey_sets (hole_id, azimuth_ref, survey_date, declination, declination_source, instrument, version, updated_at) VALUES ($1, $2, $3, $4, $5, $6, 1, $7)`
	updateSurveySet  = `UPDATE survey_sets SET azimuth_ref = $1, survey_date = $2, declination = $3, declination_source = $4, instrument = $5, version = version + 1, updated_at = $6 WHERE hole_id = $7 AND version = $8 RETURNING version`
	deleteStations   = `DELETE FROM survey_stations WHERE hole_id = $1`
	insertStation    = `INSERT INTO survey_stations (hole_id, depth, azimuth, dip) VALUES ($1, $2, $3, $4)`
	deleteSurveySet  = `DELETE FROM survey_sets WHERE hole_id = $1 AND version = $2`
	surveySetVersion = `SELECT version FROM survey_sets WHERE hole_id = $1`
)

// GetSurvey returns the hole's survey set with its stations in depth order.
func (s *Store) GetSurvey(ctx context.Context, holeID int64) (domain.SurveySet, error) {
	var ss domain.SurveySet
	q := s.read()
	if s.tx == nil {
		// Read the set and its stations from one snapshot.
		tx, err := s.pool.BeginTx(ctx, pgx.TxOptions{IsoLevel: pgx.RepeatableRead, AccessMode: pgx.ReadOnly})
		if err != nil {
			return ss, translate(err)
		}
		defer tx.Rollback(context.WithoutCancel(ctx))
		q = tx
	}
	var decl *float64
	var u time.Time
	err := q.QueryRow(ctx, selectSurveySet, holeID).Scan(&ss.HoleID, &ss.AzimuthRef, &ss.SurveyDate, &decl, &ss.DeclinationSource, &ss.Instrument, &ss.Version, &u)
	if err != nil {
		return ss, one(err, "survey of hole", holeID)
	}
	ss.Declination, ss.UpdatedAt = decl, u.UTC()
	rows, err := q.Query(ctx, selectStations, holeID)
	if err != nil {
		return ss, translate(err)
	}
	ss.Stations, err = collect(rows, func(r scanner) (domain.Station, error) {
		var st domain.Station
		err := r.Scan(&st.Depth, &st.Azimuth, &st.Dip)
		return st, err
	})
	return ss, err
}

// PutSurvey replaces the hole's whole survey set in one transaction.
func (s *Store) PutSurvey(ctx context.Context, ss *domain.SurveySet, ifVersion int64) error {
	ss.Instrument = storekit.Instrument(ss.Instrument)
	t := storekit.Now()
	return s.write(ctx, func(q querier) error {
		var cur int64
		err := q.QueryRow(ctx, surveySetVersion, ss.HoleID).Scan(&cur)
		switch {
		case err == pgx.ErrNoRows:
			if ifVersion != 0 {
				return domain.Errorf(domain.PreconditionFailed, "hole %d has no survey at version %d", ss.HoleID, ifVersion)
			}
			if _, err := q.Exec(ctx, insertSurveySet, ss.HoleID, ss.AzimuthRef, ss.SurveyDate, storekit.NullFloat(ss.Declination), ss.DeclinationSource, ss.Instrument, t); err != nil {
				return storekit.SurveyCreateFailed(translate(err), violation(err), ss.HoleID)
			}
			ss.Version = 1
		case err != nil:
			return translate(err)
		default:
			if ifVersion != cur {
				return domain.Errorf(domain.PreconditionFailed, "survey of hole %d is at version %d, not %d: reload and retry", ss.HoleID, cur, ifVersion)
			}
			if err := q.QueryRow(ctx, updateSurveySet, ss.AzimuthRef, ss.SurveyDate, storekit.NullFloat(ss.Declination), ss.DeclinationSource, ss.Instrument, t, ss.HoleID, ifVersion).Scan(&ss.Version); err != nil {
				if errors.Is(err, pgx.ErrNoRows) {
					return storekit.SurveyMoved(versionGone(ctx, q, "survey_sets", "survey of hole", ss.HoleID, ifVersion), ss.HoleID, ifVersion)
				}
				return translate(err)
			}
			if _, err := q.Exec(ctx, deleteStations, ss.HoleID); err != nil {
				return translate(err)
			}
		}
		for _, st := range ss.Stations {
			if _, err := q.Exec(ctx, insertStation, ss.HoleID, st.Depth, st.Azimuth, st.Dip); err != nil {
				return translate(err)
			}
		}
		ss.UpdatedAt = t
		return nil
	})
}

// DeleteSurvey removes the hole's survey set.
func (s *Store) DeleteSurvey(ctx context.Context, holeID, ifVersion int64) error {
	return s.write(ctx, func(q querier) error {
		return deleteVersioned(ctx, q, deleteSurveySet, "survey_sets", "survey of hole", holeID, ifVersion)
	})
}
