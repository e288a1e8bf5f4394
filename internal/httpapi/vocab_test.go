package httpapi

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"

	"corvane/internal/convert"
	"corvane/internal/csvio"
	"corvane/internal/domain"
)

// TestTypeCodeRules: a type created by PUT answers 201 and is audited as
// create, a replaced one 200 and update; codes match without regard to
// case in PUT, measurements and filters (the vocabulary's spelling is kept);
// an unknown type filter is 422, as an unknown hole is.
func TestTypeCodeRules(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Vocab", nil) // JN, BD, LN
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "VC001", 0, -60)
	f.must(201, f.site, "PUT", base+"/types/FLT", map[string]string{"description": "fault"}, nil)
	var tc domain.TypeCode
	f.must(200, f.site, "PUT", base+"/types/flt", map[string]string{"description": "fault zone"}, &tc)
	if tc.Code != "FLT" || tc.Description != "fault zone" {
		t.Errorf("PUT of a case variant: %+v, want FLT replaced", tc)
	}
	var m struct {
		Type string `json:"type"`
	}
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 5, "alpha": 45, "beta": 90, "type": "jn"}, &m)
	if m.Type != "JN" {
		t.Errorf("measurement of type jn stored as %q, want JN", m.Type)
	}
	var l struct {
		Items []map[string]any `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/measurements?type=Jn", nil, &l)
	if len(l.Items) != 1 {
		t.Errorf("type=Jn: %d measurements, want 1", len(l.Items))
	}
	for _, path := range []string{"/measurements?type=nope", "/statistics?type=nope", "/measurements.csv?type=nope"} {
		p := f.do(f.site, "GET", base+path, nil).problem(t)
		if p.Status != 422 || !strings.Contains(p.Detail, "nope") {
			t.Errorf("GET %s: %d %s %v, want 422 naming the type", path, p.Status, p.Detail, p.Errors)
		}
	}
	var audit struct {
		Items []domain.AuditEntry `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/audit?limit=1000", nil, &audit)
	var actions []string
	for _, e := range audit.Items {
		if e.Entity == "type_code" && e.EntityID == "FLT" {
			actions = append(actions, e.Action)
		}
	}
	if strings.Join(actions, ",") != "create,update" {
		t.Errorf("audit of type FLT: %v, want create,update", actions)
	}
}

// TestHoleByName: hole routes take the name as well as the id; digits are
// the id, name:DIGITS the hole named so; an unknown name is 404.
func TestHoleByName(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Names", nil)
	base := "/v1/projects/" + itoa(pid) + "/holes/"
	kr := f.hole(pid, "KR-01", 0, -60)
	num := f.hole(pid, "1042", 90, -60)
	var byName, byID domain.Hole
	f.must(200, f.site, "GET", base+"KR-01", nil, &byName)
	f.must(200, f.site, "GET", base+itoa(kr.ID), nil, &byID)
	if byName.ID != kr.ID || byID.ID != kr.ID {
		t.Errorf("GET by name gave hole %d, by id %d, want %d", byName.ID, byID.ID, kr.ID)
	}
	var h domain.Hole
	f.must(200, f.site, "GET", base+"name:1042", nil, &h)
	if h.ID != num.ID {
		t.Errorf("name:1042 gave hole %d, want %d", h.ID, num.ID)
	}
	// Every route under /holes/{hole} takes the name.
	for _, sub := range []string{"path?step=10", "runs", "surveys", "intervals", "qa"} {
		f.must(200, f.site, "GET", base+"KR-01/"+sub, nil, nil)
	}
	var ivs struct {
		Items []domain.CoreInterval `json:"items"`
	}
	f.must(200, f.site, "PUT", base+"KR-01/intervals", map[string]any{"intervals": []map[string]any{{"from": 1, "to": 2}}}, &ivs)
	if len(ivs.Items) != 1 || ivs.Items[0].HoleID != kr.ID {
		t.Errorf("intervals put by hole name: %+v, want one of hole %d", ivs.Items, kr.ID)
	}
	f.must(200, f.site, "PUT", base+"KR-01/surveys/gyro", map[string]any{"azimuth_ref": "true", "stations": []map[string]any{{"depth": 0, "azimuth": 0, "dip": -60}, {"depth": 50, "azimuth": 1, "dip": -60}}}, nil, "If-None-Match", "*")
	f.must(204, f.site, "DELETE", base+"KR-01/surveys/gyro", nil, nil, "If-Match", `"1"`)
	if p := f.do(f.site, "GET", base+"KR-99", nil).problem(t); p.Status != 404 {
		t.Errorf("unknown hole name: %d, want 404", p.Status)
	}
}

// TestGetBodyPutsBack: a GET body, read-only fields and all, can be PUT back
// (the read-only fields are ignored); a field the resource does not have is
// still refused.
func TestGetBodyPutsBack(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Echo", nil)
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "EC001", 0, -60)
	var m struct {
		ID int64 `json:"id"`
	}
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 5, "alpha": 45, "beta": 90, "type": "JN"}, &m)
	for _, path := range []string{base + "/holes/" + itoa(h.ID), base + "/measurements/" + itoa(m.ID)} {
		var body map[string]any
		r := f.must(200, f.site, "GET", path, nil, &body)
		if _, ok := body["corrections"]; !ok && strings.Contains(path, "/holes/") {
			t.Fatalf("GET %s has no corrections: %v", path, body)
		}
		body["comment"] = "edited"
		if strings.Contains(path, "/holes/") {
			delete(body, "comment")
			body["crs"] = "EPSG:32750"
		}
		r = f.must(200, f.site, "PUT", path, body, nil, "If-Match", r.Header.Get("ETag"))
		body["no_such_field"] = 1
		if p := f.do(f.site, "PUT", path, body, "If-Match", r.Header.Get("ETag")).problem(t); p.Status != 422 && p.Status != 400 {
			t.Errorf("PUT %s with an unknown field: %d, want 400 or 422", path, p.Status)
		}
	}
	// A hole's core intervals as GET returns them ("items", each with its
	// id and hole_id), edited and PUT back.
	ivPath := base + "/holes/" + itoa(h.ID) + "/intervals"
	f.must(200, f.site, "PUT", ivPath, map[string]any{"intervals": []map[string]any{{"from": 1, "to": 2}, {"from": 2, "to": 3.5}}}, nil)
	var ivs map[string][]map[string]any
	f.must(200, f.site, "GET", ivPath, nil, &ivs)
	if len(ivs["items"]) != 2 || ivs["items"][0]["id"] == nil {
		t.Fatalf("intervals GET: %v", ivs)
	}
	ivs["items"][1]["recovered"] = 1.2
	var back map[string][]domain.CoreInterval
	f.must(200, f.site, "PUT", ivPath, ivs, &back)
	if got := back["items"]; len(got) != 2 || got[1].Recovered == nil || *got[1].Recovered != 1.2 {
		t.Errorf("intervals PUT back: %+v", got)
	}
	ivs["intervals"] = ivs["items"]
	if p := f.do(f.site, "PUT", ivPath, ivs).problem(t); p.Status != 422 {
		t.Errorf("intervals given twice: %d, want 422", p.Status)
	}
	// A type code as GET .../types lists it (project_id and code are
	// read-only: the path names the code).
	var types struct {
		Items []map[string]any `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/types", nil, &types)
	var jn map[string]any
	for _, it := range types.Items {
		if it["code"] == "JN" {
			jn = it
		}
	}
	if jn == nil {
		t.Fatalf("no type JN in %v", types.Items)
	}
	jn["description"] = "joint, edited"
	var got domain.TypeCode
	f.must(200, f.site, "PUT", base+"/types/JN", jn, &got)
	if got.Code != "JN" || got.Description != "joint, edited" || got.Kind != jn["kind"] {
		t.Errorf("type PUT back: %+v", got)
	}
	jn["no_such_field"] = 1
	if p := f.do(f.site, "PUT", base+"/types/JN", jn).problem(t); p.Status != 422 && p.Status != 400 {
		t.Errorf("PUT a type with an unknown field: %d, want 400 or 422", p.Status)
	}
}

// TestImportDuplicatesOverHTTP: the duplicates query parameter reaches the
// import's one rule (service tests cover the rule itself).
func TestImportDuplicatesOverHTTP(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Dups", nil)
	base := "/v1/projects/" + itoa(pid)
	f.hole(pid, "DP001", 0, -60)
	csv := "hole_id,depth,alpha,beta,type\nDP001,5,40,100,JN\nDP001,6,40,100,JN\n"
	f.must(201, f.site, "POST", base+"/imports/measurements", csv, nil)
	p := f.do(f.site, "POST", base+"/imports/measurements", csv).problem(t)
	if p.Status != 422 || len(p.Errors) != 1 || !strings.Contains(p.Errors[0].Detail, "2 rows: duplicate of a stored measurement") {
		t.Errorf("second import: %d %s %+v", p.Status, p.Detail, p.Errors)
	}
	var res struct {
		Created, Skipped, Duplicates int
	}
	f.must(201, f.site, "POST", base+"/imports/measurements?duplicates=skip", csv, &res)
	if res.Created != 0 || res.Skipped != 2 || res.Duplicates != 2 {
		t.Errorf("duplicates=skip: %+v", res)
	}
	if p := f.do(f.site, "POST", base+"/imports/measurements?duplicates=twice", csv).problem(t); p.Status != 422 {
		t.Errorf("duplicates=twice: %d, want 422", p.Status)
	}
}

// TestMeasurementByHoleName: a measurement may name its hole as the CSV
// does; a name and an id that disagree are refused.
func TestMeasurementByHoleName(t *testing.T) {
	f := newFixture(t)
	pid := f.project("HoleName", nil)
	base := "/v1/projects/" + itoa(pid)
	a := f.hole(pid, "HN-01", 0, -60)
	b := f.hole(pid, "HN-02", 0, -60)
	var m struct {
		HoleID int64  `json:"hole_id"`
		Hole   string `json:"hole"`
	}
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole": "HN-02", "depth": 5, "alpha": 45, "beta": 90, "type": "JN"}, &m)
	if m.HoleID != b.ID || m.Hole != "HN-02" {
		t.Errorf("logged by hole name: %+v, want hole %d", m, b.ID)
	}
	for _, body := range []map[string]any{
		{"hole": "HN-02", "hole_id": a.ID, "depth": 6, "alpha": 45, "beta": 90, "type": "JN"},
		{"hole": "HN-99", "depth": 6, "alpha": 45, "beta": 90, "type": "JN"},
	} {
		if p := f.do(f.site, "POST", base+"/measurements", body).problem(t); p.Status != 422 {
			t.Errorf("%v: %d %s, want 422", body, p.Status, p.Detail)
		}
	}
}

// TestDerivedNumbersEqualAtBothDoors: the measurements' derived values read
// as JSON and exported as CSV are the same figures: each JSON number,
// written with the decimals the CSV uses for the column of the same name,
// is the CSV's cell, and it carries no digit the CSV does not (no float
// noise such as 72.64999999999995 in the JSON).
func TestDerivedNumbersEqualAtBothDoors(t *testing.T) {
	f := newFixture(t)
	pid := f.project("Doors", map[string]any{"declination": 1.7, "convergence": -0.35})
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "DR001", 33.3, -61.7)
	for i, m := range [][3]float64{{12.34, 37, 211}, {56.78, 62, 14}, {101.1, 18, 299}} {
		f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": m[0], "alpha": m[1], "beta": m[2],
			"type": "JN", "apparent_thickness": 0.1 * float64(i+1)}, nil)
	}
	var l struct {
		Items []struct {
			ID      int64          `json:"id"`
			Derived map[string]any `json:"derived"`
		} `json:"items"`
	}
	f.must(200, f.site, "GET", base+"/measurements?order=depth", nil, &l)
	r := f.must(200, f.site, "GET", base+"/measurements.csv", nil, nil)
	rows, err := csv.NewReader(bytes.NewReader(r.Body)).ReadAll()
	if err != nil || len(rows) != len(l.Items)+1 {
		t.Fatalf("CSV export: %d rows, %v", len(rows), err)
	}
	col := map[string]int{}
	for i, n := range rows[0] {
		col[n] = i
	}
	checked := 0
	for i, it := range l.Items {
		for name, v := range it.Derived {
			x, ok := v.(float64)
			d := convert.Decimals(name)
			if !ok || d < 0 {
				continue
			}
			j, inCSV := col[name]
			if !inCSV {
				t.Errorf("derived %s has no CSV column", name)
				continue
			}
			cell := rows[i+1][j]
			if got := csvio.FormatFloat(x, d); got != cell {
				t.Errorf("measurement %d %s: JSON %v, CSV %q", it.ID, name, x, cell)
			}
			if c, _ := strconv.ParseFloat(cell, 64); c != x {
				t.Errorf("measurement %d %s: JSON %v carries more than the CSV's %q", it.ID, name, x, cell)
			}
			checked++
		}
	}
	if checked < 3*12 {
		t.Errorf("only %d derived numbers compared", checked)
	}
}
