package httpapi

import (
	"strconv"
	"testing"

	"corvane/internal/domain"
)

// TestETagIsQuotedVersion: the ETag of a resource is its version in double
// quotes (api/openapi.yaml says so), in the header of a read and of an edit
// alike, so an item read from a list (which has a version and no header of
// its own) is edited with If-Match "<version>": here a survey set from GET
// .../surveys is made preferred as the page does, and a stale version is
// refused.
func TestETagIsQuotedVersion(t *testing.T) {
	f := newFixture(t)
	pid := f.project("ETags", nil)
	h := f.hole(pid, "E1", 90, -60)
	hb := "/v1/projects/" + itoa(pid) + "/holes/" + itoa(h.ID)
	quoted := func(v int64) string { return `"` + strconv.FormatInt(v, 10) + `"` }

	var hv struct{ Version int64 }
	r := f.must(200, f.site, "GET", hb, nil, &hv)
	if got := r.Header.Get("ETag"); got != quoted(hv.Version) {
		t.Errorf("hole: ETag %s, version %d", got, hv.Version)
	}
	stations := []map[string]float64{{"depth": 0, "azimuth": 90, "dip": -60}, {"depth": 100, "azimuth": 92, "dip": -58}}
	var k domain.KindSet
	r = f.must(200, f.site, "PUT", hb+"/surveys/gyro", map[string]any{"azimuth_ref": "grid", "stations": stations}, &k, "If-None-Match", "*")
	if got := r.Header.Get("ETag"); got != quoted(k.Version) {
		t.Errorf("survey set created: ETag %s, version %d", got, k.Version)
	}
	f.must(200, f.site, "PUT", hb+"/surveys/magnetic", map[string]any{"azimuth_ref": "grid", "stations": stations}, nil, "If-None-Match", "*")

	var l struct{ Sets []domain.KindSet }
	f.must(200, f.site, "GET", hb+"/surveys", nil, &l)
	if len(l.Sets) != 2 || l.Sets[1].Kind != "magnetic" {
		t.Fatalf("sets %+v", l.Sets)
	}
	set := l.Sets[1]
	body := map[string]any{"azimuth_ref": set.AzimuthRef, "stations": stations, "preferred": true}
	r = f.must(200, f.site, "PUT", hb+"/surveys/magnetic", body, &k, "If-Match", quoted(set.Version))
	if got := r.Header.Get("ETag"); got != quoted(k.Version) || k.Version == set.Version || !k.Preferred {
		t.Errorf("preferred set: ETag %s, version %d (was %d), preferred %v", got, k.Version, set.Version, k.Preferred)
	}
	f.must(412, f.site, "PUT", hb+"/surveys/magnetic", body, nil, "If-Match", quoted(set.Version))

	var run domain.Run
	r = f.must(201, f.site, "POST", hb+"/runs", map[string]any{"from": 0, "to": 3, "confidence": "good"}, &run)
	if got := r.Header.Get("ETag"); got != quoted(run.Version) {
		t.Errorf("run: ETag %s, version %d", got, run.Version)
	}
}
