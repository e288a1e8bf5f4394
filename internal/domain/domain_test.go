package domain

import (
	"errors"
	"fmt"
	"strings"
	"testing"
)

func TestErrorKindsAndLocation(t *testing.T) {
	cause := errors.New("disk full")
	e := Errorf(Internal, "saving hole %s: %w", "ZR001", cause)
	if !errors.Is(e, cause) || e.Msg != "saving hole ZR001" {
		t.Fatalf("Errorf did not wrap: %#v", e)
	}
	wrapped := fmt.Errorf("outer: %w", FieldErr("dip", "dip out of range").At(Location{File: "collars.csv", Line: 7, Column: "dip"}))
	if KindOf(wrapped) != Invalid || !IsKind(wrapped, Invalid) {
		t.Fatalf("kind lost through wrapping: %v", KindOf(wrapped))
	}
	if got, want := Public(wrapped), `collars.csv:line 7, column "dip": dip out of range`; got != want {
		t.Errorf("Public = %q, want %q", got, want)
	}
	if Public(e) != "internal error" {
		t.Errorf("internal errors must not leak their text")
	}
	conflict := Errorf(Conflict, "already exists: %w", errors.New(`duplicate key value violates unique constraint "holes_project_id_name_key"`))
	if got := Public(conflict); got != "already exists" {
		t.Errorf("Public shows the driver text: %q", got)
	}
}

func TestNormalizeRejects(t *testing.T) {
	g := 400.0
	cases := []struct {
		name  string
		check func() error
		field string
	}{
		{"hole dip", func() error { h := Hole{Name: "A", Dip: -91}; return h.Normalize() }, "dip"},
		{"hole azimuth", func() error { h := Hole{Name: "A", Azimuth: 361}; return h.Normalize() }, "azimuth"},
		{"hole name", func() error { h := Hole{}; return h.Normalize() }, "name"},
		{"hole dates", func() error {
			h := Hole{Name: "A", Started: "2026-02-01", Finished: "2026-01-01"}
			return h.Normalize()
		}, "finished"},
		{"alpha", func() error { m := Measurement{Alpha: 91, TypeCode: "BD"}; return m.Normalize() }, "alpha"},
		{"gamma", func() error { m := Measurement{Alpha: 10, Gamma: &g, TypeCode: "BD"}; return m.Normalize() }, "gamma"},
		{"type", func() error { m := Measurement{Alpha: 10}; return m.Normalize() }, "type"},
		{"run order", func() error { r := Run{From: 5, To: 3}; return r.Normalize() }, "to"},
		{"run confidence", func() error { r := Run{From: 1, To: 3, Confidence: "great"}; return r.Normalize() }, "confidence"},
		{"survey order", func() error {
			s := SurveySet{Stations: []Station{{0, 10, -60}, {30, 10, -60}, {30, 11, -60}}}
			return s.Normalize()
		}, "stations[2].depth"},
		{"project unit", func() error { p := Project{Name: "x", LengthUnit: "yd"}; return p.Normalize() }, "length_unit"},
		{"type code", func() error { tc := TypeCode{Code: "has space"}; return tc.Normalize() }, "code"},
	}
	for _, c := range cases {
		err := c.check()
		var e *Error
		if !errors.As(err, &e) || e.Kind != Invalid || e.Loc.Field != c.field {
			t.Errorf("%s: got %v, want Invalid on field %q", c.name, err, c.field)
		}
	}
}

func TestNormalizeDefaultsAndFolds(t *testing.T) {
	p := Project{Name: " Zelvorra Reach "}
	if err := p.Normalize(); err != nil {
		t.Fatal(err)
	}
	if p.Name != "Zelvorra Reach" || p.RefLine != "bottom" || p.BetaApex != "downhole" || p.GammaSense != "clockwise" || p.LengthUnit != "m" || p.OutputAzimuthRef != "grid" {
		t.Errorf("defaults not applied: %+v", p)
	}
	// 360 is accepted and stored as 0 (conventions.md, "Directions").
	h := Hole{Name: "A", Azimuth: 360, Dip: -60}
	if err := h.Normalize(); err != nil || h.Azimuth != 0 {
		t.Errorf("azimuth 360: %v %v", h.Azimuth, err)
	}
}

func TestPageNorm(t *testing.T) {
	if p := (Page{}).Norm(); p.Limit != DefaultLimit {
		t.Errorf("default limit %d", p.Limit)
	}
	if p := (Page{Limit: 1e6, After: -3}).Norm(); p.Limit != MaxLimit || p.After != 0 {
		t.Errorf("caps: %+v", p)
	}
}

func TestRoleRank(t *testing.T) {
	if !(RoleRead.Rank() < RoleLog.Rank() && RoleLog.Rank() < RoleAdmin.Rank() && Role("x").Rank() == 0) {
		t.Error("role order broken")
	}
}

// TestParseDuplicates: the treatment is read as every option value is
// (case and spaces do not count); anything else is refused on the field.
func TestParseDuplicates(t *testing.T) {
	for in, want := range map[string]string{"": DuplicatesRefuse, "skip": DuplicatesSkip, "Skip": DuplicatesSkip, " KEEP ": DuplicatesKeep, "refuse": DuplicatesRefuse} {
		if got, err := ParseDuplicates(in); err != nil || got != want {
			t.Errorf("ParseDuplicates(%q) = %q, %v; want %q", in, got, err, want)
		}
	}
	if _, err := ParseDuplicates("twice"); err == nil || KindOf(err) != Invalid {
		t.Errorf("ParseDuplicates(twice): %v", err)
	}
}

// TestUnknownTypeCode names the codes there are, or says the vocabulary is
// empty and what to do, instead of an empty list.
func TestUnknownTypeCode(t *testing.T) {
	if e := UnknownTypeCode("type", "vein", []TypeCode{{Code: "joint"}, {Code: "bedding"}}); e.Loc.Field != "type" || !strings.HasSuffix(e.Msg, "(joint, bedding)") {
		t.Errorf("with a vocabulary: %v", e)
	}
	if e := UnknownTypeCode("type", "vein", nil); strings.Contains(e.Msg, "()") || !strings.Contains(e.Msg, "empty") || !strings.Contains(e.Msg, "/types/") {
		t.Errorf("without one: %v", e)
	}
}
