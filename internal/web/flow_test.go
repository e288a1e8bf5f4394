package web_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"corvane/internal/service"

	"github.com/chromedp/cdproto/browser"
	"github.com/chromedp/chromedp"
)

// server is a running corvane service with the demonstration programme,
// as the browser tests see it.
type server struct {
	URL       string // http://127.0.0.1:port
	Token     string // may log and edit in the demo project
	ReadToken string // may only read the demo project
	Project   int64
	svc       *service.Service // for tests that set up data of their own
}

// api calls the service from Go, as a second user would.
func (s *server) api(t *testing.T, method, path, ifMatch string, body any) (int, http.Header, []byte) {
	t.Helper()
	var rd io.Reader
	if body != nil {
		b, err := json.Marshal(body)
		if err != nil {
			t.Fatal(err)
		}
		rd = bytes.NewReader(b)
	}
	req, err := http.NewRequest(method, s.URL+path, rd)
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+s.Token)
	req.Header.Set("Accept", "application/json")
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	if ifMatch != "" {
		req.Header.Set("If-Match", ifMatch)
	}
	res, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, err := io.ReadAll(res.Body)
	if err != nil {
		t.Fatal(err)
	}
	return res.StatusCode, res.Header, b
}

func (s *server) getJSON(t *testing.T, path string, out any) http.Header {
	t.Helper()
	code, h, b := s.api(t, http.MethodGet, path, "", nil)
	if code != http.StatusOK {
		t.Fatalf("GET %s: %d %s", path, code, b)
	}
	if err := json.Unmarshal(b, out); err != nil {
		t.Fatalf("GET %s: %v", path, err)
	}
	return h
}

type hole struct {
	ID         int64   `json:"id"`
	Name       string  `json:"name"`
	FinalDepth float64 `json:"final_depth"`
}

type derived struct {
	Dip          *float64 `json:"dip"`
	DipDirection *float64 `json:"dip_direction"`
	PoleTrend    *float64 `json:"pole_trend"`
	PolePlunge   *float64 `json:"pole_plunge"`
}

type measurement struct {
	ID       int64   `json:"id"`
	HoleID   int64   `json:"hole_id"`
	Depth    float64 `json:"depth"`
	Alpha    float64 `json:"alpha"`
	Beta     float64 `json:"beta"`
	Type     string  `json:"type"`
	Comment  string  `json:"comment"`
	LoggedBy string  `json:"logged_by"`
	Version  int64   `json:"version"`
	Derived  derived `json:"derived"`
}

func (s *server) holes(t *testing.T) []hole {
	var r struct{ Items []hole }
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/holes?limit=1000", s.Project), &r)
	if len(r.Items) == 0 {
		t.Fatal("the demo programme has no holes")
	}
	return r.Items
}

func (s *server) measurements(t *testing.T, query string) []measurement {
	var all []measurement
	after := ""
	for {
		var r struct {
			Items     []measurement
			NextAfter *int64 `json:"next_after"`
		}
		s.getJSON(t, fmt.Sprintf("/v1/projects/%d/measurements?limit=1000&%s%s", s.Project, query, after), &r)
		all = append(all, r.Items...)
		if r.NextAfter == nil || *r.NextAfter == 0 {
			return all
		}
		after = fmt.Sprintf("&after=%d", *r.NextAfter)
	}
}

func TestOverview(t *testing.T) {
	s := startService(t)
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	holes := s.holes(t)
	p.waitFor("every hole in the table", fmt.Sprintf(`document.querySelectorAll('#holes-table tbody tr').length === %d`, len(holes)))
	p.waitFor("plan and section drawn", fmt.Sprintf(`document.querySelectorAll('svg.chart .trace').length === %d`, 2*len(holes)))
	// The traces come from the server's desurveyed paths, one request per
	// hole, and no conversion is asked for on the overview.
	for _, h := range holes {
		js := fmt.Sprintf(`performance.getEntriesByType("resource").some((e) => new URL(e.name).pathname === "/v1/projects/%d/holes/%d/path")`, s.Project, h.ID)
		if !eval[bool](p, js) {
			t.Errorf("the overview did not read the path of %s from the path route", h.Name)
		}
	}
	if eval[bool](p, `performance.getEntriesByType("resource").some((e) => new URL(e.name).pathname === "/v1/convert")`) {
		t.Error("the overview still converts positions to draw the traces")
	}
	for _, h := range holes {
		row := p.text(fmt.Sprintf(`#holes-table tr[data-hole="%s"]`, h.Name))
		if !strings.Contains(row, h.Name) || !strings.Contains(row, fmt.Sprintf("%.1f", h.FinalDepth)) {
			t.Errorf("row of %s reads %q: want its name and final depth %.1f", h.Name, row, h.FinalDepth)
		}
		if !strings.Contains(row, "%") {
			t.Errorf("row of %s shows no oriented share: %q", h.Name, row)
		}
	}
	// QA flag counts per hole are those of the server's QA report.
	var rep struct {
		Findings []struct {
			Severity string `json:"severity"`
			HoleID   string `json:"hole_id"`
		} `json:"findings"`
	}
	if code, _, b := s.api(t, http.MethodGet, fmt.Sprintf("/v1/projects/%d/qa", s.Project), "", nil); code == http.StatusOK {
		if err := json.Unmarshal(b, &rep); err != nil {
			t.Fatal(err)
		}
		for _, h := range holes {
			flags, warns := 0, 0
			for _, f := range rep.Findings {
				if f.HoleID == h.Name && f.Severity == "flag" {
					flags++
				}
				if f.HoleID == h.Name && f.Severity == "warning" {
					warns++
				}
			}
			cell := p.text(fmt.Sprintf(`#holes-table tr[data-hole="%s"] td:nth-last-child(2)`, h.Name))
			want := "none"
			if flags+warns > 0 {
				want = fmt.Sprintf("%d flag", flags)
			}
			if !strings.HasPrefix(cell, want) || (flags+warns > 0 && !strings.Contains(cell, fmt.Sprintf("%d warn", warns))) {
				t.Errorf("QA cell of %s reads %q; the report has %d flags and %d warnings", h.Name, cell, flags, warns)
			}
		}
	} else {
		t.Errorf("no QA report from the server (HTTP %d)", code)
	}
	// The token lives in sessionStorage only: nothing in localStorage or cookies.
	// (localStorage may hold the logger's name, never the token.)
	if ok := eval[bool](p, fmt.Sprintf(`sessionStorage.getItem("corvane.token") === %q && !Object.values(localStorage).some((v) => v.includes(%q)) && document.cookie === ""`, s.Token, s.Token)); !ok {
		t.Error("the token is not kept in sessionStorage alone")
	}
	// Changing the section azimuth redraws the section.
	p.do("section azimuth", chromedp.SetValue(chromedp.CSS("#sec-az"), "90"), chromedp.Evaluate[chromedp.Void](`document.querySelector("#sec-az").dispatchEvent(new Event("input", {bubbles: true}))`))
	p.waitFor("section redrawn", `document.querySelector('svg.chart[aria-label="Section along azimuth 90"]') !== null`)
	p.shot("overview")
}

// TestOverviewTablet checks the overview at a tablet width in portrait.
func TestOverviewTablet(t *testing.T) {
	s := startService(t)
	p := newPage(t, s.URL, 820, 1180)
	p.signIn(s.Token)
	p.waitFor("plan drawn", `document.querySelectorAll('svg.chart .trace').length > 0`)
	if w := eval[float64](p, `document.documentElement.scrollWidth - window.innerWidth`); w > 1 {
		t.Errorf("the page is %v px wider than a tablet screen", w)
	}
	p.shot("overview-tablet")

	// The bench form at the same width: fields, preview and net without
	// sideways scrolling.
	h := s.holes(t)[4]
	p.do("open logging", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/log?hole=%d", s.URL, s.Project, h.ID)))
	p.waitFor("form ready", `document.activeElement && document.activeElement.id === 'f-depth' && document.querySelector('#log-net svg') !== null`)
	if w := eval[float64](p, `document.documentElement.scrollWidth - window.innerWidth`); w > 1 {
		t.Errorf("the logging view is %v px wider than a tablet screen", w)
	}
	p.shot("logging-tablet")
}

func TestSignInRefusesBadToken(t *testing.T) {
	s := startService(t)
	p := newPage(t, s.URL, 1024, 768)
	p.allow("401") // the browser logs the refused request
	p.do("open page", chromedp.Navigate(s.URL+"/"), chromedp.WaitVisible(chromedp.CSS("#token")), chromedp.SendKeys(chromedp.CSS("#token"), "not-a-token\r"))
	p.waitFor("refusal", `document.querySelector('#token-msg').textContent.includes('does not accept')`)
	// The sign-in screen shows neither the views nor "Sign out".
	if eval[bool](p, `getComputedStyle(document.querySelector('#nav')).display !== 'none' || getComputedStyle(document.querySelector('#signout')).display !== 'none'`) {
		t.Error("the navigation or Sign out shows on the sign-in screen")
	}
	if eval[bool](p, `sessionStorage.getItem("corvane.token") !== null`) {
		t.Error("a refused token was kept")
	}
	p.shot("signin-refused")
}

// equalAreaXY is the lower-hemisphere equal-area (Lambert azimuthal,
// Schmidt) projection of a line with trend and plunge in degrees, on a net
// of radius 1, north up, y down as on screen: r = sqrt(2) sin((90 - plunge)/2).
// Source: Snyder (1987), Map Projections: A Working Manual, USGS Professional
// Paper 1395, Lambert azimuthal equal-area, polar aspect, rho = 2 R sin(chi/2)
// with the net scaled so that the primitive circle has radius 1 (formula as
// recalled from memory; it is also the standard stereonet construction).
func equalAreaXY(trend, plunge float64) (x, y float64) {
	r := math.Sqrt2 * math.Sin((90-plunge)*math.Pi/360)
	return r * math.Sin(trend*math.Pi/180), -r * math.Cos(trend*math.Pi/180)
}

func TestLoggingWithKeyboard(t *testing.T) {
	s := startService(t)
	holes := s.holes(t)
	h := holes[0] // this test's own hole
	before := s.measurements(t, "hole="+h.Name)
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	p.do("open logging", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/log?hole=%d", s.URL, s.Project, h.ID)))
	p.waitFor("form ready", `document.activeElement && document.activeElement.id === 'f-depth' && document.querySelector('#log-net svg') !== null`)
	p.waitFor("existing poles drawn", fmt.Sprintf(`document.querySelectorAll('#log-net .pole-old > *').length === %d`, countPoles(before)))

	// Depth, then the type by its first letter, then the angles: Tab between
	// fields as at the bench.
	depth := math.Round(h.FinalDepth*0.4*10) / 10
	p.keys(fmt.Sprintf("%v", depth))
	p.keys("\t")
	typ := eval[string](p, `document.querySelector('#f-type option:nth-child(2)').value`)
	p.keys(typ[:1])
	p.keys("\t35\t210\t\t\tlogged from the browser test\tL7")
	p.waitFor("converted orientation", `document.querySelector('#pv-dip') !== null && document.querySelector('#pv-dipdir') !== null`)
	// Previews of the half-typed numbers may still be on screen (a busy
	// machine): wait for the one of the numbers in the form, asked of the
	// same route by the test itself.
	final := eval[float64](p, fmt.Sprintf(`(async () => {
	  const v = (n) => +document.querySelector('#f-' + n).value;
	  const r = await fetch('/v1/projects/%d/holes/%d/preview', {method: 'POST', headers: {Authorization: 'Bearer ' + sessionStorage.getItem('corvane.token'), 'Content-Type': 'application/json', Accept: 'application/json'},
	    body: JSON.stringify({measurements: [{depth: v('depth'), alpha: v('alpha'), beta: v('beta')}]})});
	  return (await r.json()).results[0].derived.dip;
	})()`, s.Project, h.ID))
	p.waitFor("the preview of the typed numbers", fmt.Sprintf(`Math.abs(+document.querySelector('#pv-dip').dataset.value - %v) < 1e-9`, final))
	shownDip := p.text("#pv-dip")
	shownDir := p.text("#pv-dipdir")
	exactDip := eval[float64](p, `+document.querySelector('#pv-dip').dataset.value`)
	exactDir := eval[float64](p, `+document.querySelector('#pv-dipdir').dataset.value`)
	p.waitFor("new pole on the net", `document.querySelector('#log-net .pole-new') !== null && document.querySelector('#log-net .pole-new').children.length > 0`)
	p.shot("logging")

	// Enter saves. The message appears without moving the form.
	top := eval[float64](p, `document.querySelector('#save').getBoundingClientRect().top + window.scrollY`)
	p.keys("\r")
	p.waitFor("saved", `document.querySelector('#form-msg').textContent.startsWith('Saved')`)
	if now := eval[float64](p, `document.querySelector('#save').getBoundingClientRect().top + window.scrollY`); now != top {
		t.Errorf("the Saved message moved the form: Save button at %v, was %v", now, top)
	}
	after := s.measurements(t, "hole="+h.Name)
	if len(after) != len(before)+1 {
		t.Fatalf("measurements of %s: %d before, %d after saving one", h.Name, len(before), len(after))
	}
	var saved *measurement
	for i := range after {
		if after[i].Comment == "logged from the browser test" {
			saved = &after[i]
		}
	}
	if saved == nil {
		t.Fatal("the saved measurement is not on the server")
	}
	if saved.Alpha != 35 || saved.Beta != 210 || saved.Depth != depth || saved.Type != typ {
		t.Errorf("saved %+v; typed depth %v type %s alpha 35 beta 210", *saved, depth, typ)
	}
	// The measurement carries the person's name typed at the bench, not the
	// token's name, and the browser remembers it for the next one.
	if saved.LoggedBy != "L7" {
		t.Errorf("saved measurement logged_by %q, want the person typed on the page (L7)", saved.LoggedBy)
	}
	if got := eval[string](p, `document.querySelector('#f-logged_by').value`); got != "L7" {
		t.Errorf("logger field after saving reads %q, want L7 kept", got)
	}
	// What the page showed while typing is what the server derives for the
	// stored row.
	if saved.Derived.Dip == nil || saved.Derived.DipDirection == nil {
		t.Fatalf("saved measurement has no derived plane: %+v", saved.Derived)
	}
	if want := fmt.Sprintf("%.0f", *saved.Derived.Dip); shownDip != want {
		t.Errorf("page showed dip %s while typing; server derives %s", shownDip, want)
	}
	if want := fmt.Sprintf("%03d", int(math.Round(*saved.Derived.DipDirection))%360); shownDir != want {
		t.Errorf("page showed dip direction %s while typing; server derives %s", shownDir, want)
	}
	// The preview orients against the stored hole on the server (the
	// preview route, the same hole model), exactly as the stored row is
	// derived; the page no longer rebuilds a conversion request.
	if math.Abs(exactDip-*saved.Derived.Dip) > 1e-9 || math.Abs(exactDir-*saved.Derived.DipDirection) > 1e-9 {
		t.Errorf("preview %.12f/%.12f differs from the stored row's %.12f/%.12f", exactDip, exactDir, *saved.Derived.Dip, *saved.Derived.DipDirection)
	}
	if !eval[bool](p, `performance.getEntriesByType("resource").some((e) => /\/holes\/\d+\/preview$/.test(new URL(e.name).pathname))`) {
		t.Error("the live preview did not call the hole's preview route")
	}
	if eval[bool](p, `performance.getEntriesByType("resource").some((e) => new URL(e.name).pathname === "/v1/convert")`) {
		t.Error("the live preview still rebuilds a conversion request for /v1/convert")
	}
	// The new pole is now among the hole's poles, where the equal-area
	// projection puts it.
	p.waitFor("pole kept", fmt.Sprintf(`document.querySelectorAll('#log-net .pole-old > *').length === %d`, countPoles(after)))
	checkPolePosition(t, p, *saved.Derived.PoleTrend, *saved.Derived.PolePlunge)

	// Alpha 95 is refused next to the field and nothing typed is lost.
	p.do("focus depth", chromedp.Focus(chromedp.CSS("#f-depth")))
	p.keys("\t\t95\t100\t\t\tsecond try")
	p.keys("\r")
	p.waitFor("refusal next to alpha", `document.querySelector('#m-alpha').textContent.includes('between 0 and 90')`)
	if got := p.text("#form-msg"); !strings.Contains(got, "Not saved") {
		t.Errorf("form message %q, want a refusal", got)
	}
	if got := eval[string](p, `document.querySelector('#f-alpha').getAttribute('aria-invalid')`); got != "true" {
		t.Errorf("alpha field not marked invalid: %q", got)
	}
	vals := eval[map[string]string](p, `Object.fromEntries(['depth','alpha','beta','comment'].map(n => [n, document.querySelector('#f-' + n).value]))`)
	if vals["alpha"] != "95" || vals["beta"] != "100" || vals["comment"] != "second try" || vals["depth"] == "" {
		t.Errorf("typed values lost after the refusal: %v", vals)
	}
	// Never both messages at once, and the form has not moved.
	if eval[bool](p, `/Saved/.test(document.body.innerText.replace(document.querySelector('#form-msg').innerText, '').replace(/Saved in this session/g, '')) && document.querySelector('#form-msg').textContent.includes('Not saved')`) {
		t.Error(`"Saved" is shown beside "Not saved"`)
	}
	if now := eval[float64](p, `document.querySelector('#save').getBoundingClientRect().top + window.scrollY`); now != top {
		t.Errorf("the Not saved message moved the form: Save button at %v, was %v", now, top)
	}
	p.shot("logging-refused")
	// Fixing the field clears "Not saved".
	p.do("fix alpha", chromedp.Evaluate[chromedp.Void](`document.querySelector('#f-alpha').select()`))
	p.keys("35")
	p.waitFor("Not saved cleared", `!document.querySelector('#form-msg').textContent.includes('Not saved') && document.querySelector('#f-alpha').getAttribute('aria-invalid') === null`)
	p.do("focus depth again", chromedp.Focus(chromedp.CSS("#f-depth")))
	p.do("break alpha again", chromedp.Evaluate[chromedp.Void](`document.querySelector('#f-alpha').value = '95'`))
	if n := len(s.measurements(t, "hole="+h.Name)); n != len(after) {
		t.Errorf("a refused measurement reached the server: %d rows, want %d", n, len(after))
	}
}

func countPoles(ms []measurement) int {
	n := 0
	for _, m := range ms {
		if m.Derived.PolePlunge != nil && m.Derived.PoleTrend != nil {
			n++
		}
	}
	return n
}

// checkPolePosition finds a pole marker of the hole's net at the position the
// published equal-area formula gives for (trend, plunge).
func checkPolePosition(t *testing.T, p *page, trend, plunge float64) {
	t.Helper()
	geo := eval[map[string]float64](p, `(() => { const c = document.querySelector('#log-net svg > circle'); return {cx: +c.getAttribute('cx'), cy: +c.getAttribute('cy'), r: +c.getAttribute('r')}; })()`)
	x, y := equalAreaXY(trend, plunge)
	wx, wy := geo["cx"]+geo["r"]*x, geo["cy"]+geo["r"]*y
	// Marker centres: circles by cx/cy, other shapes by the centre of their box.
	// Marks are drawn at a unit size and placed by their transform.
	d := eval[float64](p, fmt.Sprintf(`Math.min(...[...document.querySelectorAll('#log-net .pole-old > *')].map(e => { const b = e.getBBox(); const t = e.transform.baseVal.consolidate(); const m = t ? t.matrix : new DOMMatrix(); const c = new DOMPoint(b.x + b.width/2, b.y + b.height/2).matrixTransform(m); return Math.hypot(c.x - %f, c.y - %f); }))`, wx, wy))
	if d > 1.0 {
		t.Errorf("no pole marker within 1 px of the equal-area position of %.1f/%.1f (nearest %.2f px)", trend, plunge, d)
	}
}

func TestServerRefusalKeepsTyping(t *testing.T) {
	s := startService(t)
	if s.ReadToken == "" {
		t.Fatal("the harness made no read-only token")
	}
	h := s.holes(t)[3] // this test's own hole
	p := newPage(t, s.URL, 1366, 900)
	p.allow("403")
	p.signIn(s.ReadToken)
	p.do("open logging", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/log?hole=%d", s.URL, s.Project, h.ID)))
	p.waitFor("form ready", `document.activeElement && document.activeElement.id === 'f-depth'`)
	p.keys("12.5\t")
	typ := eval[string](p, `document.querySelector('#f-type option:nth-child(2)').value`)
	p.keys(typ[:1])
	p.keys("\t40\t120\t\t\tread-only try\tL3\r")
	p.waitFor("server reason shown", `document.querySelector('#form-msg').textContent.includes('Not saved')`)
	msg := p.text("#form-msg")
	if !strings.Contains(msg, "403") || !strings.Contains(msg, "still here") {
		t.Errorf("form message %q: want the server's reason (HTTP 403) and that the values are kept", msg)
	}
	vals := eval[map[string]string](p, `Object.fromEntries(['depth','alpha','beta','comment'].map(n => [n, document.querySelector('#f-' + n).value]))`)
	if vals["depth"] != "12.5" || vals["alpha"] != "40" || vals["beta"] != "120" || vals["comment"] != "read-only try" {
		t.Errorf("typed values lost after the server refused: %v", vals)
	}
	p.shot("logging-server-refused")
}

func TestEditConflict(t *testing.T) {
	s := startService(t)
	h := s.holes(t)[1] // this test's own hole
	ms := s.measurements(t, "hole="+h.Name)
	if len(ms) == 0 {
		t.Fatal("no measurement to edit")
	}
	m := ms[len(ms)/2]
	p := newPage(t, s.URL, 1366, 900)
	p.allow("412") // the browser logs the refused save
	p.signIn(s.Token)
	p.do("open edit", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/log?hole=%d&edit=%d", s.URL, s.Project, h.ID, m.ID)))
	p.waitFor("edit form filled", fmt.Sprintf(`document.querySelector('#f-alpha') && document.querySelector('#f-alpha').value === %q && document.activeElement.id === 'f-alpha'`, trimFloat(m.Alpha)))

	// A second logger changes the same row first, with the current ETag.
	var cur measurement
	hdr := s.getJSON(t, fmt.Sprintf("/v1/projects/%d/measurements/%d", s.Project, m.ID), &cur)
	body := map[string]any{"hole_id": cur.HoleID, "depth": cur.Depth, "alpha": cur.Alpha, "beta": cur.Beta, "type": cur.Type, "comment": "changed by the other logger"}
	if code, _, b := s.api(t, http.MethodPut, fmt.Sprintf("/v1/projects/%d/measurements/%d", s.Project, m.ID), hdr.Get("ETag"), body); code != http.StatusOK {
		t.Fatalf("second logger's edit: %d %s", code, b)
	}

	// This page's edit is now stale: the server answers 412 and the page
	// shows the conflict instead of overwriting.
	newAlpha := "12"
	if trimFloat(m.Alpha) == newAlpha {
		newAlpha = "13"
	}
	p.do("select alpha", chromedp.Evaluate[chromedp.Void](`document.querySelector('#f-alpha').select()`))
	p.keys(newAlpha + "\r")
	p.waitFor("conflict shown", `!document.querySelector('#conflict').hidden`)
	if got := p.text("#conflict"); !strings.Contains(got, "changed on the server") || !strings.Contains(got, "changed by the other logger") {
		t.Errorf("conflict panel reads %q: want the server's current version shown", got)
	}
	var mid measurement
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/measurements/%d", s.Project, m.ID), &mid)
	if mid.Comment != "changed by the other logger" || trimFloat(mid.Alpha) != trimFloat(m.Alpha) {
		t.Errorf("the stale edit overwrote the other logger's change: %+v", mid)
	}
	p.shot("logging-conflict")

	// Resolve: keep this page's alpha over the new version.
	p.do("save mine", chromedp.Click(chromedp.CSS("#conflict-mine")))
	p.waitFor("saved after resolving", `document.querySelector('#form-msg').textContent.startsWith('Saved')`)
	var end measurement
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/measurements/%d", s.Project, m.ID), &end)
	if trimFloat(end.Alpha) != newAlpha || end.Version != mid.Version+1 {
		t.Errorf("after resolving: alpha %v version %d; want alpha %s version %d", end.Alpha, end.Version, newAlpha, mid.Version+1)
	}
}

func trimFloat(v float64) string { return strings.TrimSuffix(fmt.Sprintf("%g", v), ".0") }

func TestHoleView(t *testing.T) {
	s := startService(t)
	h := s.holes(t)[2] // this test's own hole
	all := s.measurements(t, "hole="+h.Name)
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	p.do("open hole", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/hole/%d", s.URL, s.Project, h.ID)))
	p.waitFor("table filled", fmt.Sprintf(`document.querySelectorAll('#measurements tbody tr').length === %d`, len(all)))
	p.waitFor("strip drawn", fmt.Sprintf(`document.querySelectorAll('.strip-m > *').length === %d && document.querySelectorAll('rect[data-confidence]').length > 0`, len(all)))
	p.shot("hole")

	// Sorting by dip, then descending.
	p.do("sort by dip", chromedp.Click(chromedp.CSS(`th[data-key="dip"] button`)))
	dips := eval[[]float64](p, `[...document.querySelectorAll('#measurements tbody td[data-key=dip]')].map(c => c.textContent).filter(t => t !== '').map(Number)`)
	for i := 1; i < len(dips); i++ {
		if dips[i] < dips[i-1] {
			t.Fatalf("dips not ascending after sorting: %v", dips)
		}
	}
	p.do("sort by dip descending", chromedp.Click(chromedp.CSS(`th[data-key="dip"] button`)))
	if got := eval[string](p, `document.querySelector('th[data-key="dip"]').getAttribute('aria-sort')`); got != "descending" {
		t.Errorf("aria-sort %q after the second click", got)
	}

	// Filter to one type; the table holds what the server's filter holds, and
	// the CSV export holds the same rows.
	typ := all[0].Type
	want := s.measurements(t, "hole="+h.Name+"&type="+typ)
	p.do("filter by type", chromedp.Evaluate[chromedp.Void](fmt.Sprintf(`document.querySelectorAll('#filters input[name=type]').forEach(c => { c.checked = c.value === %q; })`, typ)),
		chromedp.Click(chromedp.CSS(`#filters button[type=submit]`)))
	p.waitFor("filtered table", fmt.Sprintf(`document.querySelectorAll('#measurements tbody tr').length === %d && location.hash.includes('type=')`, len(want)))
	dl := t.TempDir()
	if _, err := chromedp.CallBrowser(p.ctx, browser.SetDownloadBehavior, browser.SetDownloadBehaviorParams{Behavior: browser.SetDownloadBehaviorBehaviorAllow, DownloadPath: dl}); err != nil {
		t.Fatalf("allowing downloads: %v", err)
	}
	p.do("export", chromedp.Click(chromedp.CSS("#export-csv")))
	csv := waitFile(t, dl, h.Name+"-measurements.csv")
	lines := strings.Split(strings.TrimSpace(string(csv)), "\n")
	if len(lines)-1 != len(want) {
		t.Errorf("CSV export has %d rows, the filter holds %d", len(lines)-1, len(want))
	}
}

func TestNetsAndQA(t *testing.T) {
	s := startService(t)
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	p.do("open nets", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/nets", s.URL, s.Project)))
	p.waitFor("net shown", `document.querySelector('#net img, #net svg') !== null && document.querySelector('#rose svg, #rose img') !== null && document.querySelector('#stats-table') !== null`)
	p.waitFor("net drawn", `document.querySelector('#net svg.served-net') !== null`)
	p.shot("nets")

	// Terzaghi weighting puts the weighted figures beside the unweighted ones,
	// and the net can be saved as served.
	p.do("choose weighting", chromedp.SetValue(chromedp.CSS("#n-weight"), "terzaghi"), chromedp.Click(chromedp.CSS(`#net-form button[type=submit]`)))
	p.waitFor("weighted statistics", `location.hash.includes('terzaghi=true') && [...document.querySelectorAll('#stats-table th')].some(th => th.textContent === 'Weighted mean')`)
	dl := t.TempDir()
	if _, err := chromedp.CallBrowser(p.ctx, browser.SetDownloadBehavior, browser.SetDownloadBehaviorParams{Behavior: browser.SetDownloadBehaviorBehaviorAllow, DownloadPath: dl}); err != nil {
		t.Fatalf("allowing downloads: %v", err)
	}
	p.waitFor("net drawn", `document.querySelector('#net svg.served-net') !== null`)
	p.do("download SVG", chromedp.Click(chromedp.CSS("#download-svg")))
	svg := waitFile(t, dl, ".svg")
	if !strings.Contains(string(svg), "<svg") {
		t.Errorf("downloaded net is not SVG: %.80q", svg)
	}

	// The rose is the server's: dip directions by default, strikes on request,
	// and its SVG downloads as served.
	p.waitFor("rose served", `document.querySelector('#rose img') !== null && document.querySelector('#rose img').complete && document.querySelector('#rose img').naturalWidth > 0`)
	p.do("rose of strikes", chromedp.SetValue(chromedp.CSS("#n-rose"), "strike"), chromedp.Click(chromedp.CSS(`#net-form button[type=submit]`)))
	p.waitFor("strike rose", `location.hash.includes('rose=strike') && document.querySelector('#rose img') !== null && document.querySelector('#rose img').alt.includes('strikes') && document.querySelector('#rose img').complete`)
	dlRose := t.TempDir()
	if _, err := chromedp.CallBrowser(p.ctx, browser.SetDownloadBehavior, browser.SetDownloadBehaviorParams{Behavior: browser.SetDownloadBehaviorBehaviorAllow, DownloadPath: dlRose}); err != nil {
		t.Fatalf("allowing downloads: %v", err)
	}
	p.do("download rose", chromedp.Click(chromedp.CSS("#download-rose")))
	rs := waitFile(t, dlRose, "-rose.svg")
	code, _, served := s.api(t, http.MethodGet, fmt.Sprintf("/v1/projects/%d/rose?of=strike", s.Project), "", nil)
	if code != http.StatusOK || !bytes.Equal(rs, served) || !strings.Contains(string(rs), "Rose of strike") {
		t.Errorf("downloaded rose (%d bytes) is not the served strike rose (HTTP %d, %d bytes)", len(rs), code, len(served))
	}

	// The selection exports for modelling: the 3D scene downloads as the
	// route serves it, bytes intact (a binary file).
	dlGLB := t.TempDir()
	if _, err := chromedp.CallBrowser(p.ctx, browser.SetDownloadBehavior, browser.SetDownloadBehaviorParams{Behavior: browser.SetDownloadBehaviorBehaviorAllow, DownloadPath: dlGLB}); err != nil {
		t.Fatalf("allowing downloads: %v", err)
	}
	p.do("download scene", chromedp.SetValue(chromedp.CSS("#n-transfer"), "glb"), chromedp.Click(chromedp.CSS("#download-transfer")))
	glb := waitFile(t, dlGLB, "scene.glb")
	code, _, served = s.api(t, http.MethodGet, fmt.Sprintf("/v1/projects/%d/scene.glb", s.Project), "", nil)
	if code != http.StatusOK || !bytes.Equal(glb, served) || !bytes.HasPrefix(glb, []byte("glTF")) {
		t.Errorf("downloaded scene (%d bytes) is not the served .glb (HTTP %d, %d bytes)", len(glb), code, len(served))
	}

	// The QA view with the bedding of the demo programme as the persistent
	// fabric for the mark-rotation check.
	p.do("open QA", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/qa?persistent=bedding", s.URL, s.Project)))
	p.waitFor("QA shown", `document.querySelector('#qa-caution') !== null`)
	p.shot("qa")
	if got := p.text("#qa-fabric-used"); got != "bedding" {
		t.Errorf("QA ran with the fabric %q, want bedding", got)
	}
	var rep struct {
		Summary struct {
			BySeverity map[string]int `json:"by_severity"`
		} `json:"summary"`
		Findings []json.RawMessage `json:"findings"`
	}
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/qa?persistent=bedding", s.Project), &rep)
	if got := p.text("#qa-count-flag"); got != fmt.Sprint(rep.Summary.BySeverity["flag"]) {
		t.Errorf("QA view shows %s flags; the report has %d", got, rep.Summary.BySeverity["flag"])
	}
	if n := eval[int](p, `document.querySelectorAll('.qa-hole tbody tr').length`); n != len(rep.Findings) {
		t.Errorf("QA view lists %d findings; the report has %d", n, len(rep.Findings))
	}
	if !strings.Contains(p.text("#qa-caution"), "judgement") {
		t.Error("the QA view does not state that flags guide judgement")
	}
	// A flag on a measurement leads to that measurement's row (the demo
	// programme has findings on single measurements and on runs).
	href := eval[string](p, `(document.querySelector('a.concerns[href*="?m="]') || {}).getAttribute?.('href') || ''`)
	if href == "" {
		t.Fatal("no QA finding links to a single measurement")
	}
	p.do("follow flag", chromedp.Click(chromedp.CSS(`a.concerns[href*="?m="]`)))
	id := href[strings.Index(href, "?m=")+3:]
	p.waitFor("measurement highlighted", fmt.Sprintf(`document.querySelector('#m-%s.hl') !== null`, id))

	// A flag on a run leads to that run on the depth strip.
	p.do("back to QA", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/qa?persistent=bedding", s.URL, s.Project)))
	p.waitFor("QA shown", `document.querySelector('#qa-caution') !== null`)
	href = eval[string](p, `(document.querySelector('a.concerns[href*="?run="]') || {}).getAttribute?.('href') || ''`)
	if href == "" {
		t.Fatal("no QA finding links to a run")
	}
	p.do("follow run flag", chromedp.Click(chromedp.CSS(`a.concerns[href*="?run="]`)))
	id = href[strings.Index(href, "?run=")+5:]
	p.waitFor("run highlighted", fmt.Sprintf(`document.querySelector('rect.hl-run[data-id="%s"]') !== null`, id))
}

// waitFile waits for a finished download in dir whose name ends with suffix.
func waitFile(t *testing.T, dir, suffix string) []byte {
	t.Helper()
	deadline := time.Now().Add(15 * time.Second)
	for time.Now().Before(deadline) {
		entries, _ := os.ReadDir(dir)
		for _, e := range entries {
			if strings.HasSuffix(e.Name(), suffix) {
				if b, err := os.ReadFile(filepath.Join(dir, e.Name())); err == nil && len(b) > 0 {
					return b
				}
			}
		}
		time.Sleep(100 * time.Millisecond)
	}
	t.Fatalf("no file *%s downloaded", suffix)
	return nil
}

// The sync panel shows a conflict's two versions beside each other and
// sends a person's choice.
func TestSyncConflictsPanel(t *testing.T) {
	s := startService(t)
	hs := s.holes(t)
	h := hs[len(hs)-1]
	ms := s.measurements(t, "hole="+h.Name)
	if len(ms) == 0 {
		t.Fatal("no measurement")
	}
	var cur map[string]any
	id := int64(0)
	for _, m := range ms { // a plain plane: one the route would store again as it is
		s.getJSON(t, fmt.Sprintf("/v1/projects/%d/measurements/%d", s.Project, m.ID), &cur)
		if cur["gamma"] == nil {
			id = m.ID
			break
		}
	}
	gid, _ := cur["global_id"].(string)
	var rec service.SyncRecord
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/sync/records/measurements/%s", s.Project, gid), &rec)
	push := func(replica, comment string) service.PushResponse {
		r := rec
		m := *r.Measurement
		m.Comment = comment
		r.Measurement = &m
		ch := []service.PushChange{{ChangeID: replica + ":1", Base: rec.Version, SyncRecord: r}}
		code, _, b := s.api(t, http.MethodPost, fmt.Sprintf("/v1/projects/%d/sync/push", s.Project), "",
			service.PushRequest{BatchID: service.BatchID(replica, ch), Replica: replica, Changes: ch})
		var resp service.PushResponse
		if code != http.StatusOK || json.Unmarshal(b, &resp) != nil {
			t.Fatalf("push: %d %s", code, b)
		}
		return resp
	}
	if r := push("laptop-a", "open, iron-stained"); r.Results[0].Status != service.PushApplied {
		t.Fatalf("first push: %+v", r.Results)
	}
	if r := push("laptop-b", "closed, calcite"); r.Results[0].Status != service.PushConflict {
		t.Fatalf("second push: %+v, want a conflict", r.Results)
	}
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	p.do("open sync", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/sync", s.URL, s.Project)))
	p.waitFor("conflict shown", `document.querySelector('section.conflict tr.differs')`)
	row := p.text("section.conflict tr.differs")
	if !strings.Contains(row, "comment") || !strings.Contains(row, "closed, calcite") || !strings.Contains(row, "open, iron-stained") {
		t.Errorf("the differing row reads %q: want both comments beside each other", row)
	}
	p.shot("sync-conflicts")
	p.do("keep local", chromedp.Click(chromedp.CSS(`section.conflict button[data-keep="local"]`)))
	p.waitFor("resolved", `document.querySelector('#no-conflicts')`)
	var end map[string]any
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/measurements/%d", s.Project, id), &end)
	if end["comment"] != "closed, calcite" {
		t.Errorf("after keep local the comment is %v", end["comment"])
	}
	p.checkErrors()
}
