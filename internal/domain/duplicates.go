package domain

// Duplicate measurements: the one rule, used by the measurement import.
//
// Two measurements are duplicates when they have the same hole, depth, type
// code, alpha, beta and gamma (both without a beta — unoriented — or the
// same beta; both without a gamma, or the same gamma),
// compared as the numbers stored (after the type code is matched to the
// vocabulary's spelling and beta or gamma 360 folded to 0). Comment, logger
// and thickness do not count. An import refuses a file with duplicates, of
// rows already stored or of an earlier row of the same file, unless the
// upload says how to treat them: DuplicatesSkip leaves them out,
// DuplicatesKeep stores them anyway.

import "corvane/internal/words"

// Duplicate treatments.
const (
	DuplicatesRefuse = "refuse" // the default: each duplicate is a row problem
	DuplicatesSkip   = "skip"   // leave duplicates out and count them
	DuplicatesKeep   = "keep"   // store duplicates and count them
)

// ParseDuplicates reads a duplicate treatment, spelt as any option value
// (words.Option: "Skip" is skip); "" is DuplicatesRefuse.
func ParseDuplicates(s string) (string, error) {
	switch v := words.Option(s); v {
	case "":
		return DuplicatesRefuse, nil
	case DuplicatesRefuse, DuplicatesSkip, DuplicatesKeep:
		return v, nil
	}
	return "", FieldErr("duplicates", "duplicates=%q: want refuse, skip or keep", s)
}

// MeasurementKey is what makes two measurements duplicates.
type MeasurementKey struct {
	HoleID             int64
	Type               string
	Depth, Alpha, Beta float64
	HasBeta            bool // false for an unoriented measurement
	HasGamma           bool
	Gamma              float64
}

// KeyOf returns m's duplicate key.
func KeyOf(m Measurement) MeasurementKey {
	k := MeasurementKey{HoleID: m.HoleID, Type: m.TypeCode, Depth: m.Depth, Alpha: m.Alpha}
	if m.Beta != nil {
		k.HasBeta, k.Beta = true, *m.Beta
	}
	if m.Gamma != nil {
		k.HasGamma, k.Gamma = true, *m.Gamma
	}
	return k
}

// DuplicateStoredMsg is the problem of a row that repeats a stored measurement.
const DuplicateStoredMsg = "duplicate of a stored measurement (same hole, depth, type, alpha, beta and gamma); " + DuplicatesHint

// DuplicatesHint says how to import duplicates anyway, in words that fit
// every door (the route's duplicates=skip, the command's --duplicates skip,
// the page's choice).
const DuplicatesHint = "set duplicates to skip to leave such rows out, or to keep to store them"
