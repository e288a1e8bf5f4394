package cli

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"corvane/internal/convert"
	"corvane/internal/csvio"
	"corvane/internal/domain"
	"corvane/internal/holemodel"
)

// Columns of the hole summary written by convert --hole-summary.
var holeSummaryColumns = []string{"hole_id", "survey_set", "survey_azimuth_reference", "output_azimuth_reference",
	"declination", "declination_source", "grid_convergence", "convergence_source",
	"rows", "rows_with_warnings", "rows_with_errors", "caution", "error"}

// holeCounts are the output rows of one hole.
type holeCounts struct{ rows, warn, bad int }

// writeHoleSummary writes one row per hole of hs (collar-file order), then
// one per hole id that appears only in the structure rows: the azimuth
// survey in use (survey_set: "survey" for rows without a kind, else a kind),
// its azimuth references, the corrections applied and where they came from, the row
// counts from counts, any caution, and the hole's error. A hole whose
// declination changes with the survey date lists each value and source, in
// depth order, separated by ";".
func writeHoleSummary(w io.Writer, hs *convert.Holes, srows []csvio.SurveyRow, counts map[string]*holeCounts, order []string) error {
	out := hs.Options().Output.String()
	refs := map[string][]string{}
	depths := map[string][]float64{}
	for _, s := range srows {
		// Only the rows of the survey in use (domain.UsedSurvey).
		if h := hs.Hole(s.HoleID); h == nil || s.Kind != h.Survey && (s.Kind != "" || h.Survey != domain.SurveyOfHole) {
			continue
		}
		r := s.AzimuthRef
		if r == "" {
			r = out // a survey azimuth without a reference is in the output reference
		}
		if !contains(refs[s.HoleID], r) {
			refs[s.HoleID] = append(refs[s.HoleID], r)
		}
		depths[s.HoleID] = append(depths[s.HoleID], s.Station.Depth)
	}
	// The corrections at the derived values' precision (convert.Decimals),
	// as the hole's corrections in the service's JSON.
	num := func(v float64, col string) string {
		if math.IsNaN(v) {
			return ""
		}
		return csvio.FormatFloat(v, convert.Decimals(col))
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(holeSummaryColumns); err != nil {
		return err
	}
	seen := map[string]bool{}
	for _, h := range hs.List() {
		seen[h.ID] = true
		var vals, srcs []string
		var got []holemodel.Correction
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
				vals, srcs = append(vals, num(c.Value, convert.ColDeclination)), append(srcs, string(c.Source))
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
		if err := cw.Write([]string{h.ID, h.Survey, strings.Join(refs[h.ID], ";"), out,
			strings.Join(vals, ";"), strings.Join(srcs, ";"), num(h.Convergence.Value, convert.ColGridConvergence), string(h.Convergence.Source),
			strconv.Itoa(c.rows), strconv.Itoa(c.warn), strconv.Itoa(c.bad), h.Caution(), msg}); err != nil {
			return err
		}
	}
	for _, id := range order {
		if seen[id] {
			continue
		}
		c := counts[id]
		if err := cw.Write([]string{id, "", "", out, "", "", "", "", strconv.Itoa(c.rows), strconv.Itoa(c.warn), strconv.Itoa(c.bad), "",
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
