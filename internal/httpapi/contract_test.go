package httpapi

import (
	"bytes"
	"context"
	"io"
	"net/http"
	"net/http/httptest"
	"regexp"
	"sort"
	"strings"
	"sync"
	"testing"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"

	"corvane/api"
	"corvane/internal/domain"
	"corvane/internal/service"
)

var (
	docOnce   sync.Once
	docErr    error
	doc       *openapi3.T
	docRouter *pathRouter
)

// pathRouter finds the documented operation of a concrete request path by
// matching it against every path template of the document.
type pathRouter struct {
	doc   *openapi3.T
	paths []docPattern
}

type docPattern struct {
	template string
	re       *regexp.Regexp
	names    []string
}

var docParam = regexp.MustCompile(`\{([^}]+)\}`)

func newPathRouter(d *openapi3.T) *pathRouter {
	r := &pathRouter{doc: d}
	for _, p := range d.Paths.InMatchingOrder() {
		var names []string
		for _, m := range docParam.FindAllStringSubmatch(p, -1) {
			names = append(names, m[1])
		}
		var b strings.Builder
		b.WriteString("^")
		rest := p
		for {
			i := strings.Index(rest, "{")
			if i < 0 {
				b.WriteString(regexp.QuoteMeta(rest))
				break
			}
			j := strings.Index(rest, "}")
			b.WriteString(regexp.QuoteMeta(rest[:i]))
			b.WriteString("([^/]+)")
			rest = rest[j+1:]
		}
		b.WriteString("$")
		r.paths = append(r.paths, docPattern{template: p, re: regexp.MustCompile(b.String()), names: names})
	}
	return r
}

// FindRoute returns the operation for req, preferring the template with the
// most literal characters when several match.
func (r *pathRouter) FindRoute(req *http.Request) (*routers.Route, map[string]string, error) {
	best, bestLit := -1, -1
	var bestParams map[string]string
	for i, p := range r.paths {
		m := p.re.FindStringSubmatch(req.URL.Path)
		if m == nil {
			continue
		}
		lit := len(docParam.ReplaceAllString(p.template, ""))
		if lit > bestLit {
			best, bestLit = i, lit
			bestParams = map[string]string{}
			for k, n := range p.names {
				bestParams[n] = m[k+1]
			}
		}
	}
	if best < 0 {
		return nil, nil, routers.ErrPathNotFound
	}
	tpl := r.paths[best].template
	item := r.doc.Paths.Value(tpl)
	op := item.GetOperation(req.Method)
	if op == nil {
		return nil, nil, routers.ErrMethodNotAllowed
	}
	return &routers.Route{Spec: r.doc, Path: tpl, PathItem: item, Method: req.Method, Operation: op}, bestParams, nil
}

// contract loads api/openapi.yaml once, checks it is a valid OpenAPI
// document, and returns it with a router over its paths.
func contract(t testing.TB) (*openapi3.T, *pathRouter) {
	t.Helper()
	docOnce.Do(func() {
		openapi3filter.RegisterBodyDecoder("image/svg+xml", openapi3filter.PlainBodyDecoder)
		openapi3filter.RegisterBodyDecoder("text/html", openapi3filter.PlainBodyDecoder)
		l := openapi3.NewLoader()
		doc, docErr = l.LoadFromData(api.OpenAPI)
		if docErr != nil {
			return
		}
		if docErr = doc.Validate(context.Background()); docErr != nil {
			return
		}
		docRouter = newPathRouter(doc)
	})
	if docErr != nil {
		t.Fatalf("api/openapi.yaml: %v", docErr)
	}
	return doc, docRouter
}

var ginParam = regexp.MustCompile(`[:*]([A-Za-z_][A-Za-z0-9_]*)`)

// docPath turns gin's /v1/projects/:project into /v1/projects/{project}.
func docPath(ginPath string) string { return ginParam.ReplaceAllString(ginPath, "{$1}") }

// TestContractEveryRouteDocumented walks the live route table and fails on
// any route (method and path) that api/openapi.yaml does not describe, and
// on any documented operation that is not served.
func TestContractEveryRouteDocumented(t *testing.T) {
	d, _ := contract(t)
	s := newTestServer(t)
	live := map[string]bool{}
	for _, r := range s.Routes() {
		p := docPath(r.Path)
		key := r.Method + " " + p
		live[key] = true
		item := d.Paths.Value(p)
		if item == nil {
			t.Errorf("route %s %s: path %s missing from api/openapi.yaml", r.Method, r.Path, p)
			continue
		}
		if item.GetOperation(r.Method) == nil {
			t.Errorf("route %s %s: method missing from api/openapi.yaml", r.Method, r.Path)
		}
	}
	var documented []string
	for p, item := range d.Paths.Map() {
		for m := range item.Operations() {
			documented = append(documented, m+" "+p)
		}
	}
	sort.Strings(documented)
	for _, k := range documented {
		if !live[k] {
			t.Errorf("api/openapi.yaml documents %s but the server has no such route", k)
		}
	}
}

// checker validates every request and response made through it against the
// document: it is an http.Handler wrapping the server under test.
type checker struct {
	t      testing.TB
	h      http.Handler
	router *pathRouter
	mu     sync.Mutex
	seen   map[string]bool // "METHOD path status" validated
}

func newChecker(t testing.TB, h http.Handler) *checker {
	_, r := contract(t)
	return &checker{t: t, h: h, router: r, seen: map[string]bool{}}
}

func (c *checker) ServeHTTP(w http.ResponseWriter, req *http.Request) {
	var reqBody []byte
	if req.Body != nil {
		reqBody, _ = io.ReadAll(req.Body)
		req.Body = io.NopCloser(bytes.NewReader(reqBody))
	}
	rec := httptest.NewRecorder()
	c.h.ServeHTTP(rec, req)
	for k, v := range rec.Header() {
		w.Header()[k] = v
	}
	w.WriteHeader(rec.Code)
	_, _ = w.Write(rec.Body.Bytes())
	c.validate(req, reqBody, rec)
}

func (c *checker) validate(req *http.Request, reqBody []byte, rec *httptest.ResponseRecorder) {
	c.t.Helper()
	vreq := req.Clone(context.Background())
	vreq.Body = io.NopCloser(bytes.NewReader(reqBody))
	if vreq.URL.Host == "" {
		vreq.URL.Scheme, vreq.URL.Host = "http", "example.test"
	}
	route, params, err := c.router.FindRoute(vreq)
	if err != nil {
		if rec.Code == http.StatusNotFound || rec.Code == http.StatusMethodNotAllowed {
			return // unknown routes are answered with a problem; nothing to check against
		}
		if !strings.HasPrefix(req.URL.Path, "/v1/") {
			return // the web page's assets, served by the optional Web handler
		}
		c.t.Errorf("contract: %s %s answered %d but is not in api/openapi.yaml: %v", req.Method, req.URL.Path, rec.Code, err)
		return
	}
	in := &openapi3filter.RequestValidationInput{
		Request: vreq, PathParams: params, Route: route,
		Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc, IncludeResponseStatus: true},
	}
	out := &openapi3filter.ResponseValidationInput{
		RequestValidationInput: in, Status: rec.Code, Header: rec.Header(),
		Options: &openapi3filter.Options{IncludeResponseStatus: true, MultiError: true},
	}
	out.SetBodyBytes(rec.Body.Bytes())
	if err := openapi3filter.ValidateResponse(context.Background(), out); err != nil {
		c.t.Errorf("contract: response to %s %s (%d) does not match api/openapi.yaml: %v\nbody: %.600s",
			req.Method, req.URL.RequestURI(), rec.Code, err, rec.Body.String())
	}
	// Requests the tests send on purpose to be refused need not match the
	// request schema; the good ones must.
	if rec.Code < 400 {
		if err := openapi3filter.ValidateRequest(context.Background(), in); err != nil {
			c.t.Errorf("contract: accepted request %s %s does not match api/openapi.yaml: %v", req.Method, req.URL.RequestURI(), err)
		}
	}
	c.mu.Lock()
	c.seen[route.Method+" "+route.Path+" "+http.StatusText(rec.Code)] = true
	c.mu.Unlock()
}

// operations reports the documented operations the checker has seen answered.
func (c *checker) operations() map[string]bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	ops := map[string]bool{}
	for k := range c.seen {
		f := strings.SplitN(k, " ", 3)
		ops[f[0]+" "+f[1]] = true
	}
	return ops
}

// TestContractTour calls every documented operation at least once through
// the checker, so that a real response of each is validated against the
// document, and fails on any operation the tour did not reach.
func TestContractTour(t *testing.T) {
	f := newFixture(t)
	d, _ := contract(t)
	pid := f.project("Tour", nil)
	base := "/v1/projects/" + itoa(pid)
	h := f.hole(pid, "TR001", 120, -65)
	hb := base + "/holes/" + itoa(h.ID)

	f.must(200, "", "GET", "/healthz", nil, nil)
	f.must(200, "", "GET", "/readyz", nil, nil)
	f.must(200, "", "GET", "/metrics", nil, nil)
	f.must(200, "", "GET", "/openapi.yaml", nil, nil)
	f.must(200, f.site, "POST", "/v1/convert", map[string]any{
		"collars":      []map[string]any{{"hole_id": "A", "azimuth": 0, "dip": -60, "final_depth": 50}},
		"measurements": []map[string]any{{"hole_id": "A", "depth": 5, "alpha": 20, "beta": 180}},
	}, nil)
	f.must(200, f.site, "GET", "/v1/projects", nil, nil)
	f.must(200, f.site, "GET", "/v1/legend", nil, nil)
	r := f.must(200, f.site, "GET", base, nil, nil)
	f.must(200, f.site, "PUT", base, map[string]any{"name": "Tour", "description": "edited"}, nil, "If-Match", r.Header.Get("ETag"))
	f.must(200, f.site, "GET", base+"/types", nil, nil)
	f.must(201, f.site, "PUT", base+"/types/FT", map[string]string{"description": "fault", "kind": "plane", "colour": "#cc79a7", "mark": "star"}, nil)
	f.must(200, f.site, "PUT", base+"/types/ft", map[string]string{"description": "fault", "kind": "plane", "colour": "#cc79a7", "mark": "star"}, nil)
	f.must(204, f.site, "DELETE", base+"/types/FT", nil, nil)
	f.must(200, f.site, "GET", base+"/holes", nil, nil)
	r = f.must(200, f.site, "GET", hb, nil, nil)
	var hh map[string]any
	r.json(t, &hh)
	hh["final_depth"] = 500.0
	for _, k := range []string{"id", "project_id", "version", "created_at", "updated_at", "corrections"} {
		delete(hh, k)
	}
	f.must(200, f.site, "PUT", hb, hh, nil, "If-Match", r.Header.Get("ETag"))
	f.must(200, f.site, "PUT", hb+"/survey", map[string]any{"azimuth_ref": "grid",
		"stations": []map[string]float64{{"depth": 0, "azimuth": 120, "dip": -65}, {"depth": 200, "azimuth": 125, "dip": -62}}}, nil, "If-None-Match", "*")
	f.must(200, f.site, "GET", hb+"/survey", nil, nil)
	f.must(200, f.site, "PUT", hb+"/surveys/gyro", map[string]any{"instrument": "gyro", "azimuth_ref": "grid", "preferred": true,
		"stations": []map[string]float64{{"depth": 0, "azimuth": 121, "dip": -65}, {"depth": 150, "azimuth": 124, "dip": -63}}}, nil, "If-None-Match", "*")
	f.must(200, f.site, "PUT", hb+"/surveys/planned", map[string]any{"stations": []map[string]float64{{"depth": 0, "azimuth": 120, "dip": -65}}}, nil, "If-None-Match", "*")
	f.must(200, f.site, "GET", hb+"/surveys", nil, nil)
	f.must(204, f.site, "DELETE", hb+"/surveys/planned", nil, nil, "If-Match", `"1"`)
	f.must(200, f.site, "GET", hb+"/path?step=10", nil, nil)
	f.must(200, f.site, "GET", base+"/holes.csv", nil, nil)
	f.must(200, f.site, "GET", base+"/surveys.csv", nil, nil)
	f.must(200, f.site, "POST", hb+"/preview", map[string]any{"measurements": []map[string]any{{"depth": 2, "alpha": 30, "beta": 200, "gamma": 40}}}, nil)
	var run domain.Run
	f.must(201, f.site, "POST", hb+"/runs", map[string]any{"from": 0, "to": 3, "confidence": "good"}, &run)
	f.must(200, f.site, "GET", hb+"/runs", nil, nil)
	rb := base + "/runs/" + itoa(run.ID)
	f.must(200, f.site, "GET", rb, nil, nil)
	f.must(200, f.site, "PUT", rb, map[string]any{"from": 0, "to": 3.5, "confidence": "fair", "mismatch": 4}, nil, "If-Match", `"1"`)
	f.must(204, f.site, "DELETE", rb, nil, nil, "If-Match", `"2"`)
	var m view
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 2, "alpha": 30, "beta": 200, "gamma": 40, "type": "LN", "apparent_thickness": 0.3}, &m)
	mb := base + "/measurements/" + itoa(m.ID)
	f.must(200, f.site, "GET", base+"/measurements?hole=TR001&min_depth=0&max_depth=10&type=LN&from=2000-01-01&to=2100-01-01&order=depth", nil, nil)
	f.must(200, f.site, "GET", mb, nil, nil)
	f.must(200, f.site, "PUT", mb, map[string]any{"hole_id": h.ID, "depth": 2.1, "alpha": 31, "beta": 200, "type": "JN"}, nil, "If-Match", `"1"`)
	f.must(200, f.site, "GET", base+"/measurements.csv", nil, nil)
	f.must(201, f.site, "POST", base+"/imports/runs", "hole_id,from,to,confidence\nTR001,3,6,good\n", nil)
	var unoriented view
	f.must(201, f.site, "POST", base+"/measurements", map[string]any{"hole_id": h.ID, "depth": 4, "alpha": 50, "type": "JN"}, &unoriented)
	f.must(200, f.site, "PUT", hb+"/intervals", map[string]any{"intervals": []map[string]any{
		{"from": 0, "to": 3, "recovered": 2.9, "solid": 2.5, "pieces": []float64{0.5, 0.05, 1.2}, "natural_breaks": 4, "confidence": "good"},
		{"from": 3, "to": 6, "recovered": 3, "sound": 2.2, "natural_breaks": 3, "induced_breaks": 1}}}, nil)
	f.must(200, f.site, "GET", hb+"/intervals", nil, nil)
	f.must(201, f.site, "POST", base+"/imports/intervals", "hole_id,from,to,recovered,natural_breaks\nTR001,6,9,2.8,5\n", nil)
	f.must(200, f.site, "GET", base+"/intervals.csv", nil, nil)
	f.must(200, f.site, "GET", base+"/intervals/summary?hole=TR001", nil, nil)
	f.must(200, f.site, "GET", base+"/spacing?sets=type&cap=3&values=true", nil, nil)
	f.must(200, f.site, "GET", base+"/spacing/net?sets=type", nil, nil)
	f.must(200, f.site, "GET", base+"/domains?sets=type&domain=A%3DTR001:0..3&domain=B%3DTR001:3..200", nil, nil)
	f.must(200, f.site, "GET", base+"/slope-check?sets=type&face=65/180&friction=30&lateral=25", nil, nil)
	f.must(200, f.site, "GET", base+"/slope-check/planar?face=65/180&friction=30&projection=equal-angle", nil, nil)
	f.must(200, f.site, "GET", base+"/slope-check?sets=type&face=65/180&friction=30&domain=A%3DTR001", nil, nil)
	f.must(200, f.site, "GET", base+"/slope-check/wedge?face=65/180&friction=30&domain=A%3DTR001", nil, nil)
	f.must(422, f.site, "GET", base+"/slope-check?face=65/180&friction=30&domain=A%3DTR001&domain=B%3DTR001", nil, nil)
	f.must(422, f.site, "GET", base+"/slope-check/planar?face=65/180&friction=30&domain=A", nil, nil)
	f.must(200, f.site, "GET", base+"/statistics", nil, nil)
	f.must(200, f.site, "GET", base+"/net", nil, nil)
	f.must(200, f.site, "GET", base+"/net?sets=type&domain=A%3DTR001:0..3", nil, nil)
	f.must(422, f.site, "GET", base+"/net?domain=A%3DTR001&domain=B%3DTR001", nil, nil)
	f.must(200, f.site, "GET", base+"/rose?of=strike&bin=15", nil, nil)
	f.must(200, f.site, "GET", base+"/scene.glb?disc_radius=0.5&trace_step=10&origin=1000,2000,300&hole=TR001&sets=type&colour_by=set", nil, nil)
	f.must(200, f.site, "GET", base+"/scene.gltf.zip?hole=TR001&uncertainty=true", nil, nil)
	f.must(422, f.site, "GET", base+"/holes.geojson?crs=EPSG:32750", nil, nil) // the fixture's collar is not in zone 50S
	f.must(422, f.site, "GET", base+"/scene.glb?disc_radius=-1", nil, nil)
	f.must(200, f.site, "GET", base+"/points.csv?type=JN", nil, nil)
	ags := f.must(200, f.site, "GET", base+"/transfer.ags?recipient=lab", nil, nil)
	var imp struct {
		Created int `json:"created"`
	}
	f.must(200, f.site, "POST", base+"/imports/discontinuities?dry_run=true", string(ags.Body), &imp, "Content-Type", "text/plain")
	if imp.Created != 2 {
		t.Errorf("dry run of the exported AGS4: %d measurements and core intervals, want the 1 plane and the 1 core interval of TR001", imp.Created)
	}
	f.must(200, f.site, "GET", base+"/qa", nil, nil)
	f.must(200, f.site, "POST", base+"/qa?persistent=JN", map[string]any{"picks": []map[string]any{{"hole_id": "TR001", "depth": 2, "dip": 40, "dip_direction": 100}}}, nil)
	f.must(200, f.site, "GET", hb+"/qa?format=html", nil, nil)
	f.must(200, f.site, "GET", base+"/audit", nil, nil)
	f.must(200, f.site, "GET", "/v1/audit?project="+itoa(pid), nil, nil)
	f.must(200, f.site, "GET", base+"/sync/changes?after=0&limit=50&holes=TR001&replica=tour-a", nil, nil)
	var rec service.SyncRecord
	f.must(200, f.site, "GET", base+"/sync/records/measurements/"+unoriented.GlobalID, nil, &rec)
	edit := func(replica, comment string, baseVersion int64) service.PushRequest {
		r := rec
		m := *r.Measurement
		m.Comment = comment
		r.Measurement = &m
		ch := []service.PushChange{{ChangeID: replica + ":1", Base: baseVersion, SyncRecord: r}}
		return service.PushRequest{BatchID: service.BatchID(replica, ch), Replica: replica, Changes: ch}
	}
	var pushed service.PushResponse
	f.must(200, f.site, "POST", base+"/sync/push", edit("tour-a", "seen again", rec.Version), &pushed)
	f.must(200, f.site, "POST", base+"/sync/push", edit("tour-b", "seen otherwise", rec.Version), &pushed)
	if len(pushed.Results) != 1 || pushed.Results[0].Status != service.PushConflict {
		t.Fatalf("a push from a stale base: %+v, want one conflict", pushed.Results)
	}
	cid := pushed.Results[0].ConflictID
	f.must(200, f.site, "GET", base+"/sync/conflicts?status=open", nil, nil)
	f.must(200, f.site, "GET", base+"/sync/conflicts/"+cid, nil, nil)
	f.must(200, f.site, "POST", base+"/sync/conflicts/"+cid+"/resolve", map[string]string{"keep": "remote"}, nil)
	f.must(204, f.site, "DELETE", mb, nil, nil, "If-Match", `"2"`)
	r = f.must(200, f.site, "GET", hb, nil, nil)
	f.must(204, f.site, "DELETE", hb, nil, nil, "If-Match", r.Header.Get("ETag"))
	r = f.must(200, f.site, "GET", base, nil, nil)
	f.must(204, f.site, "DELETE", base, nil, nil, "If-Match", r.Header.Get("ETag"))
	f.must(201, f.site, "POST", "/v1/projects", map[string]any{"name": "Tour 2"}, nil)
	p2 := f.project("Tour 3", nil)
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(p2)+"/holes", map[string]any{"name": "H", "easting": 0, "northing": 0, "elevation": 0, "azimuth": 0, "dip": -90, "final_depth": 10}, nil)
	f.must(201, f.site, "POST", "/v1/projects/"+itoa(p2)+"/holes", map[string]any{"name": "G", "easting": 431300, "northing": 5400100, "elevation": 400, "azimuth": 20, "dip": -60, "final_depth": 100, "crs": "EPSG:32750"}, nil)
	f.must(200, f.site, "GET", "/v1/projects/"+itoa(p2)+"/holes.geojson?hole=G", nil, nil)

	seen := f.check.operations()
	for p, item := range d.Paths.Map() {
		for m := range item.Operations() {
			if !seen[m+" "+p] {
				t.Errorf("the tour did not call %s %s", m, p)
			}
		}
	}
}
