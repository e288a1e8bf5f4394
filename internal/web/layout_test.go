package web_test

import (
	"fmt"
	"strings"
	"testing"

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
