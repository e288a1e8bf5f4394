package cli

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"corvane/internal/convert"
	"corvane/internal/csvio"
)

// Columns of the hole summary written by convert --hole-summary.
var holeSummaryColumns = []string{"hole_id", "survey_azimuth_reference", "output_azimuth_reference",
	"declination", "declination_source", "grid_convergence", "convergence_source",
	"rows", "rows_with_warnings", "rows_with_errors", "caution", "error"}

// holeCounts are the output rows of one hole.
type holeCounts struct{ rows, warn, bad int }

// countRows reads a converted CSV (the input columns, then the output
// columns of package convert) and counts its rows per hole id: all rows,
// rows with warnings (including a caution about the hole's corrections)
// and rows with errors. It also returns the hole ids in order of first
// appearance.
func countRows(r io.Reader) (map[string]*holeCounts, []string, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	head, err := cr.Read()
	if err != nil {
		return nil, nil, fmt.Errorf("reading the converted rows: %w", err)
	}
	idCol, warnCol, errCol := -1, -1, -1
	for i, n := range head {
		n = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(n, "\ufeff")))
		switch {
		case n == csvio.ColHoleID && idCol < 0:
			idCol = i
		case n == convert.ColWarnings:
			warnCol = i // the last one: output columns follow the input ones
		case n == convert.ColError:
			errCol = i
		}
	}
	if idCol < 0 || warnCol < 0 || errCol < 0 {
		return nil, nil, fmt.Errorf("converted rows lack the %s, %s or %s column", csvio.ColHoleID, convert.ColWarnings, convert.ColError)
	}
	counts := map[string]*holeCounts{}
	var order []string
	cell := func(rec []string, i int) string {
		if i < len(rec) {
			return rec[i]
		}
		return ""
	}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, nil, fmt.Errorf("reading the converted rows: %w", err)
		}
		id := strings.TrimSpace(cell(rec, idCol))
		c := counts[id]
		if c == nil {
			c = &holeCounts{}
			counts[id] = c
			order = append(order, id)
		}
		c.rows++
		if cell(rec, errCol) != "" {
			c.bad++
		} else if cell(rec, warnCol) != "" {
			c.warn++
		}
	}
	return counts, order, nil
}

// writeHoleSummary writes one row per hole of hs (collar-file order), then
// one per hole id that appears only in the structure rows: the azimuth
// references, the corrections applied and where they came from, the row
// counts from counts, any caution, and the hole's error. A hole whose
// declination changes with the survey date lists each value and source, in
// depth order, separated by ";".
func writeHoleSummary(w io.Writer, hs *convert.Holes, srows []csvio.SurveyRow, counts map[string]*holeCounts, order []string) error {
	out := hs.Options().Output.String()
	refs := map[string][]string{}
	depths := map[string][]float64{}
	for _, s := range srows {
		r := s.AzimuthRef
		if r == "" {
			r = out // a survey azimuth without a reference is in the output reference
		}
		if !contains(refs[s.HoleID], r) {
			refs[s.HoleID] = append(refs[s.HoleID], r)
		}
		depths[s.HoleID] = append(depths[s.HoleID], s.Station.Depth)
	}
	num := func(v float64) string {
		if math.IsNaN(v) {
			return ""
		}
		return string(csvio.AppendFloat(nil, v, 3))
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(holeSummaryColumns); err != nil {
		return err
	}
	seen := map[string]bool{}
	for _, h := range hs.List() {
		seen[h.ID] = true
		var vals, srcs []string
		var got []convert.Correction
		for _, d := range append([]float64{0}, depths[h.ID]...) {
			c := h.Declination(d)
			dup := false
			for _, g := range got {
				if g.Source == c.Source && (g.Value == c.Value || math.IsNaN(g.Value) && math.IsNaN(c.Value)) {
					dup = true
				}
			}
			if !dup {
				got = append(got, c)
				vals, srcs = append(vals, num(c.Value)), append(srcs, string(c.Source))
			}
		}
		c := counts[h.ID]
		if c == nil {
			c = &holeCounts{}
		}
		msg := ""
		if h.Err != nil {
			msg = h.Err.Error()
		}
		if err := cw.Write([]string{h.ID, strings.Join(refs[h.ID], ";"), out,
			strings.Join(vals, ";"), strings.Join(srcs, ";"), num(h.Convergence.Value), string(h.Convergence.Source),
			strconv.Itoa(c.rows), strconv.Itoa(c.warn), strconv.Itoa(c.bad), h.Caution, msg}); err != nil {
			return err
		}
	}
	for _, id := range order {
		if seen[id] {
			continue
		}
		c := counts[id]
		if err := cw.Write([]string{id, "", out, "", "", "", "", strconv.Itoa(c.rows), strconv.Itoa(c.warn), strconv.Itoa(c.bad), "",
			fmt.Sprintf("hole %q is not in the collars file", id)}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

func contains(xs []string, x string) bool {
	for _, y := range xs {
		if y == x {
			return true
		}
	}
	return false
}
