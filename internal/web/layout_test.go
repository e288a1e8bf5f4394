package web_test

import (
	"context"
	"fmt"
	"strings"
	"testing"
	"time"

	"corvane/internal/domain"
	"corvane/internal/service"

	"github.com/chromedp/chromedp"
)

// layoutProblems lists, by bounding boxes in the rendered page, every table
// column that reaches outside its (scrolling) box, every legend key outside
// its legend or over another key, every chart label outside its chart, every
// pair of overlapping place labels (holes, section ends, strip headings), and
// a page wider than the window. Boxes may touch (1.5 px).
const layoutProblems = `(() => {
  const bad = [];
  const tol = 1.5;
  const vw = document.documentElement.clientWidth;
  const R = (e) => e.getBoundingClientRect();
  const shown = (e) => { const r = R(e); return r.width > 0 && r.height > 0; };
  const meet = (r, q) => r.left < q.right - tol && q.left < r.right - tol && r.top < q.bottom - tol && q.top < r.bottom - tol;
  const name = (e) => (e.textContent || "").trim().replace(/\s+/g, " ").slice(0, 30);
  for (const t of document.querySelectorAll("main table")) {
    if (!shown(t)) continue;
    const b = R(t.closest(".scroll") || t.parentElement);
    for (const c of t.querySelectorAll("thead th, tbody tr:first-child > *")) {
      const r = R(c);
      if (r.right > b.right + tol || r.left < b.left - tol) bad.push("table " + (t.id || t.className) + ": column '" + name(c) + "' clipped (" + Math.round(r.left) + ".." + Math.round(r.right) + " outside " + Math.round(b.left) + ".." + Math.round(b.right) + ")");
    }
  }
  for (const l of document.querySelectorAll("main .legend, main ul.set-keys")) {
    if (!shown(l)) continue;
    const lb = R(l);
    const keys = [...l.querySelectorAll(":scope > .key")];
    keys.forEach((k, i) => {
      const r = R(k);
      if (r.right > Math.min(lb.right, vw) + tol || r.left < lb.left - tol || r.bottom > lb.bottom + tol) bad.push("legend key '" + name(k) + "' clipped");
      for (const k2 of keys.slice(i + 1)) if (meet(r, R(k2))) bad.push("legend keys '" + name(k) + "' and '" + name(k2) + "' overlap");
    });
  }
  for (const s of document.querySelectorAll("main svg.chart")) {
    if (!shown(s) || s.classList.contains("keyshape") || s.classList.contains("served-net")) continue;
    const sb = R(s);
    const texts = [...s.querySelectorAll("text")].filter(shown);
    for (const t of texts) {
      const r = R(t);
      if (r.left < sb.left - tol || r.right > sb.right + tol || r.top < sb.top - tol || r.bottom > sb.bottom + tol) bad.push("label '" + name(t) + "' outside its chart (" + s.getAttribute("aria-label") + ")");
    }
    const labels = texts.filter((t) => t.matches(".hole-label, .section-end, .head"));
    labels.forEach((t, i) => { for (const u of labels.slice(i + 1)) if (meet(R(t), R(u))) bad.push("labels '" + name(t) + "' and '" + name(u) + "' overlap (" + s.getAttribute("aria-label") + ")"); });
  }
  if (document.documentElement.scrollWidth > vw + 1) bad.push("the page is " + (document.documentElement.scrollWidth - vw) + " px wider than the window");
  return bad;
})()`

// TestNothingClipped opens every view at a laptop width (1366 px) and a
// tablet width (820 px) and checks by bounding boxes that no table column,
// legend or label is clipped or overlapped.
func TestNothingClipped(t *testing.T) {
	s := startService(t)
	h := s.holes(t)[5]
	for _, w := range []struct {
		width, height int
		suffix        string
	}{{1366, 900, ""}, {820, 1180, "-tablet"}} {
		t.Run(fmt.Sprint(w.width), func(t *testing.T) {
			p := newPage(t, s.URL, w.width, w.height)
			p.signIn(s.Token)
			views := []struct{ name, hash, ready string }{
				{"overview", fmt.Sprintf("#/p/%d", s.Project), `document.querySelectorAll('svg.chart .trace').length > 0 && document.querySelector('.legend-conf') !== null`},
				{"hole", fmt.Sprintf("#/p/%d/hole/%d", s.Project, h.ID), `document.querySelector('#measurements tbody tr') !== null && document.querySelector('.strip-m') !== null`},
				{"log", fmt.Sprintf("#/p/%d/log?hole=%d", s.Project, h.ID), `document.querySelector('#log-net svg') !== null && document.querySelector('#net-legend .key') !== null`},
				{"nets", fmt.Sprintf("#/p/%d/nets", s.Project), `document.querySelector('#net svg.served-net') !== null && document.querySelector('#stats-table') !== null`},
				{"qa", fmt.Sprintf("#/p/%d/qa", s.Project), `document.querySelector('#qa-count-flag') !== null`},
			}
			for _, v := range views {
				p.do("open "+v.name, chromedp.Navigate(s.URL+"/"+v.hash))
				p.waitFor(v.name+" drawn", v.ready)
				if bad := eval[[]string](p, layoutProblems); len(bad) > 0 {
					p.shot("failed-layout-" + v.name + w.suffix)
					t.Errorf("%s at %d px:\n  %s", v.name, w.width, strings.Join(bad, "\n  "))
				}
				if w.width == 820 && (v.name == "hole" || v.name == "nets" || v.name == "qa") {
					p.shot(v.name + w.suffix)
				}
			}
		})
	}
}

type drawnStyle struct {
	Where  string `json:"where"`
	Type   string `json:"type"`
	Colour string `json:"colour"`
	Mark   string `json:"mark"`
}

// TestSameTypeSameLook: a structure type has the colour and mark stored
// with the project's vocabulary in the logging view (legend and net marks),
// the hole view (legend and depth-strip marks) and the server's net (its
// sheet's key and the HTML legend beside it).
func TestSameTypeSameLook(t *testing.T) {
	s := startService(t)
	var vocab struct {
		Items []struct {
			Code   string `json:"code"`
			Colour string `json:"colour"`
			Mark   string `json:"mark"`
		} `json:"items"`
	}
	s.getJSON(t, fmt.Sprintf("/v1/projects/%d/types", s.Project), &vocab)
	want := map[string]drawnStyle{}
	marks := map[string]bool{}
	for _, v := range vocab.Items {
		if v.Colour == "" || v.Mark == "" {
			t.Fatalf("type %s has no colour or mark: %+v", v.Code, v)
		}
		want[v.Code] = drawnStyle{Colour: strings.ToUpper(v.Colour), Mark: v.Mark}
		marks[v.Mark] = true
	}
	if len(marks) != len(vocab.Items) {
		t.Errorf("two types share a mark: %+v", vocab.Items)
	}
	h := s.holes(t)[6]
	p := newPage(t, s.URL, 1366, 900)
	p.signIn(s.Token)
	var seen []drawnStyle
	p.do("open logging", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/log?hole=%d", s.URL, s.Project, h.ID)))
	p.waitFor("net legend", `document.querySelector('#net-legend .key[data-type]') !== null`)
	seen = append(seen, eval[[]drawnStyle](p, `[
	  ...[...document.querySelectorAll('#net-legend .key[data-type]')].map((k) => ({where: "logging legend", type: k.dataset.type, colour: k.dataset.colour, mark: k.dataset.mark})),
	  ...[...document.querySelectorAll('#log-net .pole-old > [data-mark]')].map((m) => ({where: "logging net", type: m.parentNode.dataset.label, colour: m.getAttribute('fill'), mark: m.dataset.mark})),
	]`)...)
	p.do("open hole", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/hole/%d", s.URL, s.Project, h.ID)))
	p.waitFor("strip", `document.querySelector('.strip-m > [data-mark]') !== null && document.querySelector('.legend-types .key') !== null`)
	seen = append(seen, eval[[]drawnStyle](p, `[
	  ...[...document.querySelectorAll('.legend-types .key[data-type]')].map((k) => ({where: "hole legend", type: k.dataset.type, colour: k.dataset.colour, mark: k.dataset.mark})),
	  ...[...document.querySelectorAll('.strip-m > [data-mark]')].map((m) => ({where: "depth strip", type: m.querySelector('title').textContent.split(' at ')[0], colour: m.getAttribute('fill'), mark: m.dataset.mark})),
	]`)...)
	p.do("open nets", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/nets", s.URL, s.Project)))
	p.waitFor("net", `document.querySelector('#net svg.served-net g.set-key') !== null && document.querySelector('#net-legend li.key') !== null`)
	seen = append(seen, eval[[]drawnStyle](p, `[
	  ...[...document.querySelectorAll('#net svg.served-net g.set-key')].map((g) => ({where: "server net", type: g.dataset.name.replace(/ \(lines\)$/, ""), colour: g.dataset.colour, mark: g.dataset.mark})),
	  ...[...document.querySelectorAll('#net-legend li.key[data-type]')].map((k) => ({where: "net legend", type: k.dataset.type.replace(/ \(lines\)$/, ""), colour: k.dataset.colour, mark: k.dataset.mark})),
	]`)...)
	where := map[string]bool{}
	for _, d := range seen {
		w, ok := want[d.Type]
		if !ok {
			t.Errorf("%s draws an unknown type %q", d.Where, d.Type)
			continue
		}
		where[d.Where] = true
		if strings.ToUpper(d.Colour) != w.Colour || d.Mark != w.Mark {
			t.Errorf("%s draws %s as %s %s; the vocabulary says %s %s", d.Where, d.Type, d.Colour, d.Mark, w.Colour, w.Mark)
		}
	}
	for _, w := range []string{"logging legend", "logging net", "hole legend", "depth strip", "server net", "net legend"} {
		if !where[w] {
			t.Errorf("nothing drawn by type in the %s", w)
		}
	}
}

// TestLongHolePaged opens a hole of 12,500 measurements: the view shows the
// first page of rows in depth order and fetches the next on request. The
// time to the first rows is logged (a measurement, not an assertion).
func TestLongHolePaged(t *testing.T) {
	s := startService(t)
	// A project of its own, so the other tests' programme stays as it is.
	sys := service.WithActor(context.Background(), service.System)
	pr, err := s.svc.CreateProject(sys, domain.Project{Name: "Long hole"})
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := s.svc.PutTypeCode(sys, pr.ID, domain.TypeCode{Code: "joint"}); err != nil {
		t.Fatal(err)
	}
	h, err := s.svc.CreateHole(sys, pr.ID, domain.Hole{Name: "LONG1", East: 1000, North: 2000, Elevation: 400, Azimuth: 90, Dip: -60, FinalDepth: 1000})
	if err != nil {
		t.Fatal(err)
	}
	var csv strings.Builder
	csv.WriteString("hole_id,depth,alpha,beta,type,logged_by\n")
	for i := range 12500 {
		fmt.Fprintf(&csv, "LONG1,%.3f,%d,%d,joint,L4\n", float64((i*7919)%12500)*0.08, 20+i%60, (i*37)%360)
	}
	if _, err := s.svc.Import(sys, pr.ID, service.ImportRequest{Kind: "measurements", Body: strings.NewReader(csv.String())}); err != nil {
		t.Fatalf("importing 12,500 rows: %v", err)
	}
	tok, _, err := s.svc.CreateToken(sys, pr.ID, domain.RoleRead, "long-hole reader")
	if err != nil {
		t.Fatal(err)
	}
	p := newPage(t, s.URL, 1366, 900)
	p.allow("/survey") // the hole has no survey: the page asks and is told 404
	p.signIn(tok)
	start := time.Now()
	p.do("open the long hole", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/hole/%d", s.URL, pr.ID, h.ID)))
	p.waitFor("first rows", `document.querySelectorAll('#measurements tbody tr').length === 250`)
	t.Logf("hole of 12,500 measurements: first 250 rows shown %v after navigating (measured, not asserted)", time.Since(start).Round(time.Millisecond))
	depths := eval[[]float64](p, `[...document.querySelectorAll('#measurements tbody td[data-key=depth]')].map((c) => +c.textContent)`)
	for i := 1; i < len(depths); i++ {
		if depths[i] < depths[i-1] {
			t.Fatalf("rows not in depth order at %d: %v then %v", i, depths[i-1], depths[i])
		}
	}
	if got := p.text("#table-heading"); !strings.Contains(got, "250 of 12500") {
		t.Errorf("heading reads %q, want 250 of 12500", got)
	}
	last := depths[len(depths)-1]
	p.do("next page", chromedp.Click(chromedp.CSS("#more-rows")))
	p.waitFor("next rows", `document.querySelectorAll('#measurements tbody tr').length === 500`)
	more := eval[[]float64](p, `[...document.querySelectorAll('#measurements tbody td[data-key=depth]')].map((c) => +c.textContent)`)
	if more[250] < last {
		t.Errorf("the second page starts at %v, above the first page's last depth %v", more[250], last)
	}
}

// TestGammaRuleShown: the page says what the chosen type asks of gamma, and
// the server's refusal of a lineation angle on a plane type appears beside
// the gamma field, with nothing typed lost.
func TestGammaRuleShown(t *testing.T) {
	s := startService(t)
	h := s.holes(t)[7]
	p := newPage(t, s.URL, 1366, 900)
	p.allow("422") // the browser logs the refused save
	p.signIn(s.Token)
	p.do("open logging", chromedp.Navigate(fmt.Sprintf("%s/#/p/%d/log?hole=%d", s.URL, s.Project, h.ID)))
	p.waitFor("form ready", `document.activeElement && document.activeElement.id === 'f-depth'`)
	p.do("choose joint", chromedp.SetValue(chromedp.CSS("#f-type"), "joint"), chromedp.Evaluate[chromedp.Void](`document.querySelector('#f-type').dispatchEvent(new Event("input", {bubbles: true}))`))
	p.waitFor("gamma hint", `document.querySelector('#m-gamma').textContent.includes('plane type')`)
	p.do("focus depth", chromedp.Focus(chromedp.CSS("#f-depth")))
	p.keys("12.5\t\t40\t120\t33\t\tgamma on a plane\tL5\r")
	p.waitFor("refusal beside gamma", `document.querySelector('#m-gamma').classList.contains('bad') && document.querySelector('#form-msg').textContent.includes('Not saved')`)
	if got := p.text("#m-gamma"); !strings.Contains(got, "plane type") {
		t.Errorf("gamma message %q: want the server's rule", got)
	}
	if v := eval[string](p, `document.querySelector('#f-gamma').value`); v != "33" {
		t.Errorf("gamma field reads %q after the refusal, want 33 kept", v)
	}
	// Clearing gamma clears the refusal.
	p.do("clear gamma", chromedp.Evaluate[chromedp.Void](`const g = document.querySelector('#f-gamma'); g.value = ''; g.dispatchEvent(new Event("input", {bubbles: true}))`))
	p.waitFor("Not saved cleared", `!document.querySelector('#form-msg').textContent.includes('Not saved')`)
}
