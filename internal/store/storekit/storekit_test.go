package storekit

import (
	"errors"
	"strings"
	"testing"

	"corvane/internal/domain"
)

func TestTranslate(t *testing.T) {
	noRows := errors.New("no rows")
	driverErr := errors.New("driver says no")
	classes := map[error]Violation{}
	classify := func(err error) Violation { return classes[err] }
	own := domain.Errorf(domain.PreconditionFailed, "already ours")
	if got := Translate(own, "db", noRows, classify); got != own {
		t.Errorf("a *domain.Error came back as %v", got)
	}
	if Translate(nil, "db", noRows, classify) != nil {
		t.Error("nil did not stay nil")
	}
	cases := []struct {
		v    Violation
		err  error
		want domain.Kind
	}{
		{None, noRows, domain.NotFound},
		{Unique, driverErr, domain.Conflict},
		{ForeignKey, driverErr, domain.Conflict},
		{Rule, driverErr, domain.Invalid},
		{None, driverErr, domain.Internal},
	}
	for _, tc := range cases {
		classes[driverErr] = tc.v
		got := Translate(tc.err, "db", noRows, classify)
		if !domain.IsKind(got, tc.want) {
			t.Errorf("violation %d of %v: got %v, want kind %v", tc.v, tc.err, got, tc.want)
		}
		if tc.err == driverErr && !errors.Is(got, driverErr) {
			t.Errorf("violation %d: %v does not wrap the driver error", tc.v, got)
		}
	}
	classes[driverErr] = None
	if got := Translate(driverErr, "db", noRows, classify); !strings.Contains(got.Error(), "db: driver says no") {
		t.Errorf("internal error %q does not name the driver", got)
	}
}

func TestStaleAndNotFound(t *testing.T) {
	err := Stale("hole", 7, 3, 2)
	if !domain.IsKind(err, domain.PreconditionFailed) || !strings.Contains(err.Error(), "hole 7 is at version 3, not 2") {
		t.Errorf("Stale: %v", err)
	}
	err = NotFound("token", 9)
	if !domain.IsKind(err, domain.NotFound) || !strings.Contains(err.Error(), "token 9 not found") {
		t.Errorf("NotFound: %v", err)
	}
}
