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
	"strconv"
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

// Syntax is the text form of one domain that [Parse] reads (the command
// line's --domain and the service's domain query parameter).
const Syntax = "NAME=HOLE[:FROM..TO][,HOLE[:FROM..TO]...][;rock=TYPE|TYPE...]"

// ParseOne reads one domain and checks it as [Validate] does: the one
// domain of a net.
func ParseOne(s string) (Domain, error) {
	d, err := Parse(s)
	if err != nil {
		return d, err
	}
	return d, Validate([]Domain{d})
}

// Parse reads one domain in the form of [Syntax]; a hole without a range is
// the whole hole. The domains of a run are then checked together with
// [Validate].
func Parse(s string) (Domain, error) {
	name, rest, ok := strings.Cut(s, "=")
	if !ok || strings.TrimSpace(name) == "" || strings.TrimSpace(rest) == "" {
		return Domain{}, fmt.Errorf("%q: want %s", s, Syntax)
	}
	dom := Domain{Name: strings.TrimSpace(name)}
	parts, rock, hasRock := strings.Cut(rest, ";")
	if hasRock {
		r, ok := strings.CutPrefix(strings.TrimSpace(rock), "rock=")
		if !ok || strings.TrimSpace(r) == "" {
			return Domain{}, fmt.Errorf("%q: %q: want rock=TYPE|TYPE...", s, rock)
		}
		for _, t := range strings.Split(r, "|") {
			dom.RockTypes = append(dom.RockTypes, strings.TrimSpace(t))
		}
	}
	for _, p := range strings.Split(parts, ",") {
		hole, rng, hasRange := strings.Cut(strings.TrimSpace(p), ":")
		part := Part{Hole: strings.TrimSpace(hole), From: 0, To: math.Inf(1)}
		if hasRange {
			a, b, ok := strings.Cut(rng, "..")
			from, e1 := strconv.ParseFloat(strings.TrimSpace(a), 64)
			to, e2 := strconv.ParseFloat(strings.TrimSpace(b), 64)
			if !ok || e1 != nil || e2 != nil {
				return Domain{}, fmt.Errorf("%q: depth range %q: want FROM..TO", s, rng)
			}
			part.From, part.To = from, to
		}
		dom.Parts = append(dom.Parts, part)
	}
	return dom, nil
}
