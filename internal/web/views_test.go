package web_test

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"

	"github.com/chromedp/chromedp"
)

// widths are the two screens every view is read at: a laptop and a tablet
// in portrait.
var widths = []struct {
	width, height int
	suffix        string
}{{1366, 900, ""}, {820, 1180, "-tablet"}}

// checkLayout fails the test when the view has a clipped or overlapped
// column, legend key or label (layoutProblems), and saves a screenshot
// under name either way.
func (p *page) checkLayout(name string) {
	p.t.Helper()
	if bad := eval[[]string](p, layoutProblems); len(bad) > 0 {
		p.shot("failed-layout-" + name)
		p.t.Errorf("%s:\n  %s", name, strings.Join(bad, "\n  "))
	}
	p.shot(name)
	if os.Getenv("CORVANE_SCREENSHOTS_DIR") != "" { // the window alone, to read at full size
		ctx, cancel := context.WithTimeout(p.ctx, 30*time.Second)
		defer cancel()
		if buf, err := chromedp.Run(ctx, chromedp.CaptureScreenshot()); err == nil {
			_ = os.WriteFile(filepath.Join(p.shots, name+"-window.png"), buf, 0o644)
		}
	}
}

// adminToken makes a token that may change the demo project's settings.
func adminToken(t *testing.T, s *server) string {
	t.Helper()
	tok, _, err := s.svc.CreateToken(service.WithActor(context.Background(), service.System), s.Project, domain.RoleAdmin, "page admin")
	if err != nil {
		t.Fatal(err)
	}
	return tok
}

// TestLoadFile: the Load view checks a measurements file first (a dry run
// writes nothing), refuses duplicates of stored rows by default with the
// duplicates listed, reports them with the count when the upload says how
// to treat them, and loads with the choice, showing the progress of the
// upload to its end. Read at 1366 and 820 px.
func TestLoadFile(t *testing.T) {
	s := startService(t)
	h := s.holes(t)[0]
	before := s.measurements(t, "hole="+h.Name)
	if len(before) < 3 {
		t.Fatalf("hole %s has %d measurements", h.Name, len(before))
	}
	// Three rows repeat stored measurements; two are new.
	var b strings.Builder
	b.WriteString("hole_id,depth,type,alpha,beta,gamma,comment,logged_by\n")
	for _, m := range before[:3] {
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s,,,L9\n", h.Name, trimFloat(m.Depth), m.Type, trimFloat(m.Alpha), trimFloat(m.Beta))
	}
	fmt.Fprintf(&b, "%s,%s,joint,41,77,,page load,L9\n", h.Name, trimFloat(math.Min(h.FinalDepth-1, 200.25)))
	fmt.Fprintf(&b, "%s,%s,joint,42,78,,page load,L9\n", h.Name, trimFloat(math.Min(h.FinalDepth-0.5, 200.75)))
	file := filepath.Join(t.TempDir(), "bench-sheet.csv")
	if err := os.WriteFile(file, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, w := range widths {
		t.Run(fmt.Sprint(w.width), func(t *testing.T) {
			p := newPage(t, s.URL, w.width, w.height)
			p.allow("422") // the refused check is logged by the browser
			p.signIn(s.Token)
			p.do("open load", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/import", s.URL, s.Project)), chromedp.WaitVisible(chromedp.CSS("#imp-file")))
			if got := eval[string](p, `document.querySelector('input[name=duplicates]:checked').value`); got != "refuse" {
				t.Errorf("duplicates default to %q, want refuse", got)
			}
			p.do("choose file", chromedp.SetUploadFiles(chromedp.CSS("#imp-file"), []string{file}))
			p.do("check", chromedp.Click(chromedp.CSS("#imp-check")))
			p.waitFor("refusal shown", `document.querySelector('#imp-problem') !== null`)
			if txt := p.text("#imp-errors"); !strings.Contains(txt, "duplicate") || !strings.Contains(txt, "3 rows") {
				t.Errorf("the refusal does not list the three duplicates: %q", txt)
			}
			if p.text("#imp-dup-hint") == "" {
				t.Error("no hint to choose how duplicates are treated")
			}
			p.checkLayout("import-refused" + w.suffix)

			// Leave them out: the check counts them and would store the two
			// new rows only.
			p.do("skip duplicates", chromedp.Click(chromedp.CSS(`input[name=duplicates][value=skip]`)), chromedp.Click(chromedp.CSS("#imp-check")))
			p.waitFor("check result", `document.querySelector('#imp-duplicates') !== null`)
			if d, c, sk := p.text("#imp-duplicates"), p.text("#imp-created"), p.text("#imp-skipped"); !strings.HasPrefix(d, "3") || c != "2" || sk != "3" {
				t.Errorf("check: duplicates %q, new %q, left out %q; want 3, 2, 3", d, c, sk)
			}
			if n := len(s.measurements(t, "hole="+h.Name)); n != len(before) {
				t.Fatalf("a check stored rows: %d measurements, were %d", n, len(before))
			}
			p.checkLayout("import" + w.suffix)
		})
	}
	// Load with skip (at 1366 px): the two new rows are stored once; the
	// progress bar ends full with the time taken.
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	p.do("open load", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/import", s.URL, s.Project)), chromedp.WaitVisible(chromedp.CSS("#imp-file")))
	p.do("choose file", chromedp.SetUploadFiles(chromedp.CSS("#imp-file"), []string{file}), chromedp.Click(chromedp.CSS(`input[name=duplicates][value=skip]`)))
	p.do("load", chromedp.Click(chromedp.CSS("#imp-load")))
	p.waitFor("loaded", `document.querySelector('#imp-result h2') !== null && document.querySelector('#imp-result h2').textContent === 'Loaded'`)
	if txt := p.text("#imp-progress-text"); !strings.HasPrefix(txt, "Done in") {
		t.Errorf("progress ends with %q, want the time taken", txt)
	}
	if full := eval[bool](p, `(() => { const b = document.querySelector('#imp-bar'); return b.value === b.max; })()`); !full {
		t.Error("the progress bar does not end full")
	}
	after := s.measurements(t, "hole="+h.Name)
	if len(after) != len(before)+2 {
		t.Errorf("after the load %d measurements, want %d", len(after), len(before)+2)
	}
	loggedBy := 0
	for _, m := range after {
		if m.LoggedBy == "L9" {
			loggedBy++
		}
	}
	if loggedBy != 2 {
		t.Errorf("%d rows logged by L9 after the load, want the 2 new ones", loggedBy)
	}
}

// TestSurveySetsInHoleView: a hole with a gyro and a magnetic set beside
// its survey set lists all three with instrument, date and north reference,
// says which one derived values use and why, and an admin can make the gyro
// set preferred from the page, after which the derived values use it.
func TestSurveySetsInHoleView(t *testing.T) {
	s := startService(t)
	h := s.holes(t)[0]
	sys := service.WithActor(context.Background(), service.System)
	ss, err := s.svc.GetSurvey(sys, s.Project, h.ID)
	if err != nil {
		t.Fatal(err)
	}
	gyro := make([]domain.Station, len(ss.Stations))
	copy(gyro, ss.Stations)
	for i := range gyro {
		gyro[i].Azimuth += 0.4 // a re-survey a little off the first
	}
	if _, err := s.svc.PutKindSet(sys, s.Project, h.ID, "gyro", 0, domain.KindSet{Instrument: "gyro", AzimuthRef: ss.AzimuthRef, SurveyDate: "2026-05-02", Stations: gyro}); err != nil {
		t.Fatal(err)
	}
	if _, err := s.svc.PutKindSet(sys, s.Project, h.ID, "magnetic", 0, domain.KindSet{Instrument: "magnetic", AzimuthRef: ss.AzimuthRef, SurveyDate: ss.SurveyDate, Stations: ss.Stations}); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		for _, k := range []string{"gyro", "magnetic"} {
			ks, _ := s.svc.ListKindSets(sys, s.Project, h.ID)
			for _, x := range ks.Sets {
				if x.Kind == k {
					_ = s.svc.DeleteKindSet(sys, s.Project, h.ID, k, x.Version)
				}
			}
		}
	})
	for _, w := range widths {
		t.Run(fmt.Sprint(w.width), func(t *testing.T) {
			p := newPage(t, s.URL, w.width, w.height)
			p.signIn(s.Token)
			p.do("open hole", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/hole/%d", s.URL, s.Project, h.ID)))
			p.waitFor("survey sets listed", `document.querySelectorAll('#survey-sets tbody tr').length === 3`)
			if got := p.text(`#survey-sets tr.in-use th`); got != "survey set" {
				t.Errorf("set in use %q, want the survey set (no preference, no priority)", got)
			}
			if why := p.text("#survey-why"); !strings.Contains(why, "no set by kind is preferred") {
				t.Errorf("reason reads %q", why)
			}
			if row := p.text(`#survey-sets tr[data-set=gyro]`); !strings.Contains(row, "gyro") || !strings.Contains(row, "2026-05-02") || !strings.Contains(row, ss.AzimuthRef) {
				t.Errorf("gyro row reads %q: want instrument, date and north reference", row)
			}
			p.do("see stations", chromedp.ScrollIntoView(chromedp.CSS("#survey-sets")))
			p.checkLayout("hole-surveys" + w.suffix)
		})
	}
	// Choosing the preferred set needs an admin token.
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(adminToken(t, s))
	p.do("open hole", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/hole/%d", s.URL, s.Project, h.ID)))
	p.waitFor("survey sets listed", `document.querySelector('#survey-sets button[data-prefer=gyro]') !== null`)
	p.do("prefer gyro", chromedp.Click(chromedp.CSS(`#survey-sets button[data-prefer=gyro]`)))
	p.waitFor("gyro in use", `document.querySelector('#survey-sets tr.in-use[data-set=gyro]') !== null`)
	if why := p.text("#survey-why"); !strings.Contains(why, "marked preferred") {
		t.Errorf("reason after preferring reads %q", why)
	}
	if ms := s.measurements(t, "hole="+h.Name); len(ms) == 0 {
		t.Fatal("no measurements")
	} else {
		var raw struct {
			Items []struct {
				Derived struct {
					SurveySet string `json:"survey_set"`
				} `json:"derived"`
			} `json:"items"`
		}
		code, _, body := s.api(t, http.MethodGet, fmt.Sprintf("/v1/projects/%d/measurements?hole=%s&limit=1", s.Project, h.Name), "", nil)
		if err := json.Unmarshal(body, &raw); code != http.StatusOK || err != nil || len(raw.Items) != 1 || raw.Items[0].Derived.SurveySet != "gyro" {
			t.Errorf("derived values after preferring gyro: HTTP %d %v %s", code, err, body)
		}
	}
}

// TestGeotechParts: the geotechnical parts of the nets view (core
// intervals along a hole, set spacing, domains with the common-mean test, a
// kinematic check with its zones on the net) show the API's figures, the
// caution once, and nothing clipped at 1366 and 820 px.
func TestGeotechParts(t *testing.T) {
	s := startService(t)
	holes := s.holes(t)
	h := holes[0]
	var ivs []map[string]any
	for i := 0; i < 40; i++ {
		from := float64(3 * i)
		ivs = append(ivs, map[string]any{"from": from, "to": from + 3, "recovered": 2.9 - 0.01*float64(i%7), "solid": 2.5 - 0.02*float64(i%5),
			"sound": 1.2 + 0.1*float64(i%9), "natural_breaks": 2 + i%9, "induced_breaks": i % 3, "confidence": []string{"good", "good", "fair", "poor"}[i%4]})
	}
	if code, _, body := s.api(t, http.MethodPut, fmt.Sprintf("/v1/projects/%d/holes/%d/intervals", s.Project, h.ID), "", map[string]any{"intervals": ivs}); code != http.StatusOK {
		t.Fatalf("storing intervals: HTTP %d %s", code, body)
	}
	var rep struct {
		Holes []struct {
			HoleID string `json:"hole_id"`
			Total  struct {
				RQD *float64 `json:"rqd"`
			} `json:"total"`
		} `json:"holes"`
	}
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/intervals/summary", s.Project), &rep)
	if len(rep.Holes) == 0 || rep.Holes[0].Total.RQD == nil {
		t.Fatalf("intervals summary %+v", rep)
	}
	domains := fmt.Sprintf("&domain=%s&domain=%s", "north%3D"+holes[0].Name+","+holes[1].Name+","+holes[2].Name, "south%3D"+holes[3].Name+","+holes[4].Name)
	for _, w := range widths {
		t.Run(fmt.Sprint(w.width), func(t *testing.T) {
			p := newPage(t, s.URL, w.width, w.height)
			p.signIn(s.Token)
			base := fmt.Sprintf("%s/#/p/%d/nets", s.URL, s.Project)

			p.do("open intervals", chromedp.Navigate(base+"?part=intervals&hole="+h.Name))
			p.waitFor("intervals drawn", `document.querySelectorAll('#iv-chart rect.iv-bar').length > 0`)
			if n := eval[int](p, `document.querySelectorAll('#iv-chart rect.iv-rqd').length`); n != len(ivs) {
				t.Errorf("%d RQD bars, want %d", n, len(ivs))
			}
			if got, want := p.text(`#iv-totals tr:first-child td:nth-child(5)`), fmt.Sprintf("%d%%", int(math.Round(*rep.Holes[0].Total.RQD))); got != want {
				t.Errorf("RQD total %q, the report says %s", got, want)
			}
			p.checkLayout("nets-intervals" + w.suffix)

			p.do("open spacing", chromedp.Navigate(base+"?part=spacing&sets=auto:4"))
			p.waitFor("spacing shown", `document.querySelectorAll('.sp-table tbody tr').length === 4`)
			if n := eval[int](p, `document.querySelectorAll('.caution').length`); n != 1 {
				t.Errorf("spacing shows the caution %d times, want once", n)
			}
			p.checkLayout("nets-spacing" + w.suffix)

			p.do("open domains", chromedp.Navigate(base+"?part=domains&sets=auto:4"+domains))
			p.waitFor("domains compared", `document.querySelectorAll('#dm-tests tbody tr').length > 0 && document.querySelectorAll('.dm-table').length === 2`)
			if txt := p.text("#dm-tests"); !strings.Contains(txt, "p-value") {
				t.Errorf("common-mean tests without p-values: %q", txt)
			}
			// The net of a domain, from the net route's domain: the first
			// domain's at once, another on request, its sets keyed beside it.
			p.waitFor("domain net", `document.querySelector('#dm-net-svg svg.served-net') !== null && document.querySelector('#dm-net-legend h3').textContent === 'Domain north'`)
			p.do("draw south", chromedp.SetValue(chromedp.CSS("#dm-net"), "south"), chromedp.Click(chromedp.CSS("#dm-net-go")))
			p.waitFor("south net", `document.querySelector('#dm-net-legend h3') !== null && document.querySelector('#dm-net-legend h3').textContent === 'Domain south' && document.querySelectorAll('#dm-net-legend .set-keys li').length > 0`)
			p.checkLayout("nets-domains" + w.suffix)

			p.do("open slope check", chromedp.Navigate(base+"?part=slope&face_dip=65&face_dir=180&friction=30&lateral=20&check=planar&sets=auto:4"))
			p.waitFor("slope check drawn", `document.querySelector('#sl-net svg.served-net') !== null && document.querySelector('#sl-modes') !== null`)
			if n := eval[int](p, `document.querySelectorAll('.caution').length`); n != 1 {
				t.Errorf("the slope check shows the caution %d times, want once", n)
			}
			if txt := p.text("#sl-caution"); !strings.Contains(txt, "not unstable") || !strings.Contains(txt, "licensed practitioner") {
				t.Errorf("caution reads %q", txt)
			}
			if n := eval[int](p, `document.querySelectorAll('#sl-net svg #zones path').length`); n == 0 {
				t.Error("no shaded zone on the net")
			}
			if n := eval[int](p, `document.querySelectorAll('#sl-legend .zone-keys li').length`); n < 3 {
				t.Errorf("zone key has %d entries", n)
			}
			p.checkLayout("nets-slope" + w.suffix)
		})
	}
	// The counts on the page are the route's.
	var sl struct {
		Measurements struct {
			Planar struct {
				Count int `json:"count"`
			} `json:"planar"`
		} `json:"measurements"`
	}
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/slope-check?sets=auto:4&face=65/180&friction=30&lateral=20", s.Project), &sl)
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	p.do("open slope check", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/nets?part=slope&face_dip=65&face_dir=180&friction=30&lateral=20&check=wedge&sets=auto:4", s.URL, s.Project)))
	p.waitFor("slope check drawn", `document.querySelector('#sl-modes') !== null`)
	if got := p.text(`#sl-modes tr[data-mode=planar] td:nth-child(2)`); got != fmt.Sprint(sl.Measurements.Planar.Count) {
		t.Errorf("planar count %q, the route says %d", got, sl.Measurements.Planar.Count)
	}
	// Domains named under Domains travel with the tabs; the slope check of a
	// domain shows what both slope routes called with that domain= say.
	p.do("domains", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/nets?part=domains&sets=auto:4%s", s.URL, s.Project, domains)))
	p.waitFor("domains compared", `document.querySelectorAll('#dm-tests tbody tr').length > 0`)
	p.do("to the slope tab", chromedp.Click(chromedp.CSS(`#nets-parts a[data-part=slope]`)))
	p.waitFor("slope with domains", `document.querySelector('#sl-domain') !== null && document.querySelector('#sl-modes') !== null`)
	p.do("choose south", chromedp.SetValue(chromedp.CSS("#sl-domain"), "south"), chromedp.Click(chromedp.CSS(`#sl-form button[type=submit]`)))
	p.waitFor("south checked", `location.hash.includes('in=south') && document.querySelector('#sl-over') !== null && document.querySelector('#sl-over').textContent.includes('domain south')`)
	slopeOf := func(q string) slopeFigures {
		var r slopeFigures
		s.getJSON(t, fmt.Sprintf("/v1/projects/%d/slope-check?sets=auto:4&face=65/180&friction=30&lateral=20&%s", s.Project, q), &r)
		return r
	}
	south := "south=" + holes[3].Name + "," + holes[4].Name
	comparePageSlope(t, p, "domain south", slopeOf("domain="+url.QueryEscape(south)))

	// A domain with a depth range of its own in each hole: no hole-and-depth
	// filter can say it, so the page must send it whole. The case is only a
	// check if the ranges leave out poles the holes have.
	mixed := fmt.Sprintf("mixed=%s:0..60,%s:40..400", holes[3].Name, holes[4].Name)
	want := slopeOf("domain=" + url.QueryEscape(mixed))
	if whole := slopeOf("hole=" + holes[3].Name + "," + holes[4].Name); whole.Measurements.Poles == want.Measurements.Poles {
		t.Fatalf("domain %s keeps all %d poles of its holes; the case cannot tell a domain from hole filters", mixed, whole.Measurements.Poles)
	}
	p.do("open mixed", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/nets?part=slope&face_dip=65&face_dir=180&friction=30&lateral=20&check=planar&sets=auto:4&in=mixed%s&domain=%s", s.URL, s.Project, domains, url.QueryEscape(mixed))))
	p.waitFor("mixed checked", `document.querySelector('#sl-over') !== null && document.querySelector('#sl-over').textContent.includes('domain mixed') && document.querySelector('#sl-net svg.served-net') !== null`)
	if n := eval[int](p, `document.querySelectorAll('#sl-domain option:disabled').length`); n != 0 {
		t.Errorf("%d domains greyed out in the slope check", n)
	}
	comparePageSlope(t, p, "domain mixed", want)
}

// slopeFigures is the part of the slope-check route's report the page's
// figures are compared with.
type slopeFigures struct {
	Measurements struct {
		Poles  int `json:"poles"`
		Planar struct {
			Count int `json:"count"`
		} `json:"planar"`
	} `json:"measurements"`
	Sets []struct {
		Name  string `json:"name"`
		Count int    `json:"count"`
	} `json:"sets"`
}

// comparePageSlope checks the slope check on the page against the route's
// report: the poles, the planar count and each set's count.
func comparePageSlope(t *testing.T, p *page, what string, want slopeFigures) {
	t.Helper()
	if got := p.text(`#sl-modes tr[data-mode=planar] td:nth-child(4)`); got != fmt.Sprintf("%d poles", want.Measurements.Poles) {
		t.Errorf("%s: %q, the route says %d poles", what, got, want.Measurements.Poles)
	}
	if got := p.text(`#sl-modes tr[data-mode=planar] td:nth-child(2)`); got != fmt.Sprint(want.Measurements.Planar.Count) {
		t.Errorf("%s: planar count %q, the route says %d", what, got, want.Measurements.Planar.Count)
	}
	if n := eval[int](p, `document.querySelectorAll('#sl-sets-table tbody tr').length`); n != len(want.Sets) {
		t.Errorf("%s: %d sets on the page, the route has %d", what, n, len(want.Sets))
	}
	for _, st := range want.Sets {
		if got := p.text(fmt.Sprintf(`#sl-sets-table tr[data-set=%q] td:nth-child(2)`, st.Name)); got != fmt.Sprint(st.Count) {
			t.Errorf("%s: set %s n=%q, the route says %d", what, st.Name, got, st.Count)
		}
	}
}

// TestQAWithProjectFabric: the QA view and the programme overview run with
// the project's persistent fabric without anyone choosing it, so the spun
// runs planted in the demo are flagged on first sight.
func TestQAWithProjectFabric(t *testing.T) {
	s := startService(t)
	var proj struct {
		PersistentFabric string `json:"persistent_fabric"`
	}
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d", s.Project), &proj)
	if proj.PersistentFabric == "" {
		t.Fatal("the demo project names no persistent fabric")
	}
	for _, w := range widths {
		t.Run(fmt.Sprint(w.width), func(t *testing.T) {
			p := newPage(t, s.URL, w.width, w.height)
			p.signIn(s.Token)
			p.waitFor("overview fabric", `document.querySelector('#overview-fabric') !== null`)
			if txt := p.text("#overview-fabric"); !strings.Contains(txt, proj.PersistentFabric) {
				t.Errorf("overview says %q, want the project's fabric %s", txt, proj.PersistentFabric)
			}
			p.do("open QA", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/qa", s.URL, s.Project)))
			p.waitFor("QA shown", `document.querySelector('#qa-fabric-used') !== null`)
			if got := p.text("#qa-fabric-used"); got != proj.PersistentFabric {
				t.Errorf("QA ran with %q, want the project's %s", got, proj.PersistentFabric)
			}
			if n := eval[int](p, `document.querySelectorAll('.qa-hole tr code').length && [...document.querySelectorAll('.qa-hole tr code')].filter((c) => c.textContent === 'mark-rotation').length`); n == 0 {
				t.Error("no mark-rotation finding: the planted spun runs are not shown")
			}
			p.checkLayout("qa" + w.suffix)
			// Another fabric tried for the view: the choice and the offer to
			// keep it stay in the row at both widths.
			p.do("QA with joints", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/qa?persistent=joint", s.URL, s.Project)))
			p.waitFor("QA with joints", `document.querySelector('#qa-fabric-used') !== null && document.querySelector('#qa-fabric-used').textContent === 'joint' && document.querySelector('#qa-fabric-keep') !== null`)
			if bad := eval[[]string](p, layoutProblems); len(bad) > 0 {
				p.shot("failed-layout-qa-other-fabric" + w.suffix)
				t.Errorf("QA with another fabric at %d px:\n  %s", w.width, strings.Join(bad, "\n  "))
			}
			if r := eval[[]float64](p, `(() => { const a = document.querySelector('#qa-fabric-keep').getBoundingClientRect(); return [a.right, document.documentElement.clientWidth]; })()`); r[0] > r[1] {
				t.Errorf("the keep button ends at %v px, past the window's %v", r[0], r[1])
			}
		})
	}
}

// TestQAFabricKeptAsSetting: an admin who tries another fabric on the QA
// view can keep it as the project's setting; the QA then runs with it
// unasked, and the setting is the project's (read back from the API).
func TestQAFabricKeptAsSetting(t *testing.T) {
	s := startService(t)
	sys := service.WithActor(context.Background(), service.System)
	orig, err := s.svc.GetProject(sys, s.Project)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		now, err := s.svc.GetProject(sys, s.Project)
		if err == nil {
			now.PersistentFabric = orig.PersistentFabric
			_, err = s.svc.UpdateProject(sys, s.Project, now.Version, now)
		}
		if err != nil {
			t.Errorf("restoring the project's fabric: %v", err)
		}
	})
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(adminToken(t, s))
	p.do("open QA with joints", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/qa?persistent=joint", s.URL, s.Project)))
	p.waitFor("QA with joints", `document.querySelector('#qa-fabric-used') !== null && document.querySelector('#qa-fabric-used').textContent === 'joint'`)
	p.do("keep joints", chromedp.Click(chromedp.CSS("#qa-fabric-keep")))
	p.waitFor("kept", `!location.hash.includes('persistent=') && document.querySelector('#qa-fabric-used') !== null && document.querySelector('#qa-fabric-used').textContent === 'joint' && document.querySelector('#qa-fabric-keep') === null`)
	var proj struct {
		PersistentFabric string `json:"persistent_fabric"`
	}
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d", s.Project), &proj)
	if proj.PersistentFabric != "joint" {
		t.Errorf("project fabric %q after keeping joint", proj.PersistentFabric)
	}
	if got := eval[string](p, `document.querySelector('#qa-fabric option[value=""]').textContent`); !strings.Contains(got, "joint") {
		t.Errorf("the fabric choice reads %q", got)
	}
}
