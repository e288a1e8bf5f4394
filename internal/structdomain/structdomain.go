// Package structdomain defines structural domains: named parts of the rock
// mass, each a list of hole intervals (hole id and a depth range) and
// optionally a list of rock types, within which the structures are taken to
// be one population. Statistics, nets and spacing are then computed per
// domain, and [dirstat.CommonMeanTest] tells whether a set keeps its mean
// direction from one domain to the next.
//
// structdomain imports only the standard library.
package structdomain

import (
	"fmt"
	"math"
	"strings"
)

// Part is a depth range of one hole: From <= depth < To (To may be +Inf for
// the rest of the hole).
type Part struct {
	Hole     string
	From, To float64
}

// Domain is a named structural domain.
type Domain struct {
	Name  string
	Parts []Part
	// RockTypes, when not empty, limits the domain to measurements whose
	// rock type is one of these (compared without regard to case); a
	// measurement without a rock type is then outside the domain.
	RockTypes []string
}

// Contains reports whether a measurement in hole at depth, of rock type rock
// ("" when not logged), belongs to d.
func (d Domain) Contains(hole string, depth float64, rock string) bool {
	in := false
	for _, p := range d.Parts {
		if p.Hole == hole && depth >= p.From && depth < p.To {
			in = true
			break
		}
	}
	if !in {
		return false
	}
	if len(d.RockTypes) == 0 {
		return true
	}
	for _, r := range d.RockTypes {
		if strings.EqualFold(strings.TrimSpace(r), strings.TrimSpace(rock)) {
			return true
		}
	}
	return false
}

// Validate checks a list of domains: names present and unique, at least one
// part each, each part with a hole and 0 <= From < To, and no two parts of
// one domain overlapping in the same hole. Domains may overlap one another
// (a measurement may belong to several, e.g. a depth domain and a rock-type
// domain). The error names the domain and the part (counted from 1).
func Validate(ds []Domain) error {
	seen := map[string]bool{}
	for i, d := range ds {
		name := strings.TrimSpace(d.Name)
		if name == "" {
			return fmt.Errorf("domain %d has no name", i+1)
		}
		if seen[name] {
			return fmt.Errorf("domain %q is defined twice", name)
		}
		seen[name] = true
		if len(d.Parts) == 0 {
			return fmt.Errorf("domain %q has no hole interval", name)
		}
		for j, p := range d.Parts {
			switch {
			case strings.TrimSpace(p.Hole) == "":
				return fmt.Errorf("domain %q, part %d: no hole", name, j+1)
			case math.IsNaN(p.From) || p.From < 0 || math.IsInf(p.From, 0):
				return fmt.Errorf("domain %q, part %d: from %v must be a depth >= 0", name, j+1, p.From)
			case math.IsNaN(p.To) || !(p.To > p.From):
				return fmt.Errorf("domain %q, part %d: to %v is not greater than from %v", name, j+1, p.To, p.From)
			}
			for k := 0; k < j; k++ {
				q := d.Parts[k]
				if q.Hole == p.Hole && p.From < q.To && q.From < p.To {
					return fmt.Errorf("domain %q, part %d (%s %g to %g) overlaps part %d (%g to %g)", name, j+1, p.Hole, p.From, p.To, k+1, q.From, q.To)
				}
			}
		}
	}
	return nil
}
