package httpapi

import (
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"corvane/internal/domain"
	"corvane/internal/service"
)

// query reads the measurement filter from the query string: hole (hole
// names, repeated or comma-separated), min_depth, max_depth, type (codes,
// repeated or comma-separated), from and to (YYYY-MM-DD for whole days, or
// RFC 3339 instants; both inclusive), output_reference (grid, true or
// local: the north of the derived azimuths when not the project's).
func query(c *gin.Context) (service.MeasurementQuery, error) {
	var q service.MeasurementQuery
	q.Holes = splitList(c.QueryArray("hole"))
	q.Types = splitList(c.QueryArray("type"))
	q.Output = c.Query("output_reference")
	switch o := c.Query("order"); o {
	case "", "id":
	case "depth":
		q.ByDepth = true
	default:
		return q, domain.FieldErr("order", "query parameter order=%q: want id or depth", o)
	}
	num := func(name string) (*float64, error) { return numParam(c, name) }
	var err error
	if q.MinDepth, err = num("min_depth"); err != nil {
		return q, err
	}
	if q.MaxDepth, err = num("max_depth"); err != nil {
		return q, err
	}
	if q.LoggedFrom, err = when(c, "from", false); err != nil {
		return q, err
	}
	if q.LoggedTo, err = when(c, "to", true); err != nil {
		return q, err
	}
	return q, nil
}

// numParam reads an optional finite number query parameter.
func numParam(c *gin.Context, name string) (*float64, error) {
	v := c.Query(name)
	if v == "" {
		return nil, nil
	}
	x, err := strconv.ParseFloat(v, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return nil, domain.FieldErr(name, "query parameter %s=%q: want a number", name, v)
	}
	return &x, nil
}

// when parses a date or instant; a bare date at the end of a range means the
// whole day (UTC).
func when(c *gin.Context, name string, endOfDay bool) (*time.Time, error) {
	v := c.Query(name)
	if v == "" {
		return nil, nil
	}
	if t, err := time.Parse(time.RFC3339Nano, v); err == nil {
		return &t, nil
	}
	t, err := time.Parse(time.DateOnly, v)
	if err != nil {
		return nil, domain.FieldErr(name, "query parameter %s=%q: want YYYY-MM-DD or an RFC 3339 time", name, v)
	}
	if endOfDay {
		t = t.Add(24*time.Hour - time.Microsecond)
	}
	return &t, nil
}

func splitList(vs []string) []string {
	var out []string
	for _, v := range vs {
		for _, p := range strings.Split(v, ",") {
			if p = strings.TrimSpace(p); p != "" {
				out = append(out, p)
			}
		}
	}
	return out
}
