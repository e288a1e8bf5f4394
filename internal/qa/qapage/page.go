// Package qapage renders a QA report ([qa.Report]) as one self-contained
// HTML page for people: inline CSS and inline SVG, no scripts, no external
// resources. Each hole gets a depth strip (runs by confidence, estimated mark
// rotations, flags at depth, survey stations), its findings, and small
// equal-area nets of the persistent fabric of each flagged run before and
// after the suggested correction.
//
// Run confidences and finding severities are drawn in corvane's one visual
// language (package visual), with the same words, fills and marks as the web
// page; the other colours are from the same Okabe & Ito (2008)
// colour-blind-safe palette. Every coloured meaning is also carried by a
// pattern or a marker shape, so the page reads in greyscale.
package qapage

import (
	"fmt"
	"html"
	"io"
	"math"
	"sort"
	"strings"

	"corvane/internal/geom"
	"corvane/internal/projection"
	"corvane/internal/qa"
	"corvane/internal/visual"
	"corvane/internal/words"
)

// Okabe-Ito colours.
const (
	colBlue     = "#0072B2"
	colVermil   = "#D55E00"
	colGreen    = "#009E73"
	colPurple   = "#CC79A7"
	colInk      = "#1d1d1f"
	colMuted    = "#6b6b70"
	colHairline = "#c9c9ce"
)

const css = `
:root{--ink:#1d1d1f;--muted:#6b6b70;--line:#c9c9ce;--paper:#fbfbf8;--accent:#0072B2}
*{box-sizing:border-box}
body{margin:0;background:var(--paper);color:var(--ink);font:15px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif}
main{max-width:1120px;margin:0 auto;padding:24px 28px 60px}
h1{font-size:26px;margin:0 0 4px;letter-spacing:-.01em}
h2{font-size:20px;margin:36px 0 8px;padding-top:10px;border-top:3px solid var(--ink)}
h3{font-size:15px;margin:18px 0 6px;text-transform:uppercase;letter-spacing:.06em;color:var(--muted)}
.sub{color:var(--muted);margin:0 0 18px}
.caution{border-left:6px solid var(--ink);background:#fff;padding:12px 16px;margin:16px 0 22px;font-size:15px}
.caution strong{display:block;margin-bottom:2px}
.cards{display:grid;grid-template-columns:repeat(auto-fill,minmax(150px,1fr));gap:10px;margin:12px 0}
.card{background:#fff;border:1px solid var(--line);padding:10px 12px}
.card b{display:block;font-size:22px;font-variant-numeric:tabular-nums}
.card span{color:var(--muted);font-size:13px}
table{border-collapse:collapse;width:100%;margin:6px 0 12px;font-size:13.5px;background:#fff}
th,td{border-bottom:1px solid var(--line);padding:4px 8px;text-align:left;vertical-align:top}
th{font-weight:600;background:#f1f1ee}
td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.sev-flag{font-weight:700}
.sev-info{color:var(--muted)}
td.chk svg{vertical-align:-2px;margin-right:4px}
.legend{display:flex;flex-wrap:wrap;gap:14px;align-items:center;font-size:13px;margin:8px 0}
.legend svg{vertical-align:middle;margin-right:4px}
.legend .li{display:inline-flex;align-items:center;white-space:nowrap}
td.chk{white-space:nowrap}
.nets{display:flex;flex-wrap:wrap;gap:14px}
.net{background:#fff;border:1px solid var(--line);padding:6px 8px;font-size:12.5px}
.strip{background:#fff;border:1px solid var(--line);padding:4px 0;overflow-x:auto}
details{margin:6px 0}
summary{cursor:pointer;color:var(--accent)}
.methods li{margin:3px 0}
footer{margin-top:40px;color:var(--muted);font-size:12.5px}
@media print{body{background:#fff}.strip,.net,.card,table{break-inside:avoid}}
`

// svgDefs are the run-confidence patterns of the visual language, shared by
// every strip and legend.
var svgDefs = `<svg width="0" height="0" style="position:absolute" aria-hidden="true"><defs>` + visual.PatternDefs() + `</defs></svg>`

// runFill is the fill of a run in the visual language: its rating's, or for
// a rating the language does not name, that of its QA class.
func runFill(run qa.RunReport) string {
	c := strings.ToLower(strings.TrimSpace(run.Confidence))
	if visual.ConfidenceOf(c).Code == c {
		return visual.FillOf(c)
	}
	switch run.Class {
	case qa.ClassConfident:
		return visual.FillOf("good")
	case qa.ClassUnusable:
		return visual.FillOf("none")
	}
	return visual.FillOf("fair")
}

// sevMark is the inline SVG mark of a severity, w pixels square.
func sevMark(code string, w float64) string {
	v := visual.SeverityOf(code)
	return fmt.Sprintf(`<svg width="%.0f" height="%.0f" aria-hidden="true"><path d="%s" fill="%s" stroke="#000" stroke-width="1.2"/></svg>`,
		w, w, visual.MarkPath(v.Mark, w/2, w/2, w*0.3), v.Fill)
}

func esc(s string) string { return html.EscapeString(s) }

func f1(v float64) string { return fmt.Sprintf("%.1f", v) }

// Write renders r as an HTML page titled title to w.
func Write(w io.Writer, r qa.Report, title string) error {
	var b strings.Builder
	b.WriteString("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">")
	b.WriteString("<meta name=\"viewport\" content=\"width=device-width,initial-scale=1\">")
	fmt.Fprintf(&b, "<title>%s</title><style>%s</style></head><body>%s<main>", esc(title), css, svgDefs)
	fmt.Fprintf(&b, "<h1>%s</h1>", esc(title))
	fmt.Fprintf(&b, "<p class=\"sub\">Oriented core and survey QA &middot; core-angle convention: %s", esc(r.Convention))
	if r.Options.PersistentType != "" {
		fmt.Fprintf(&b, " &middot; persistent fabric: <b>%s</b> (reference: %s)", esc(r.Options.PersistentType), esc(r.Options.Reference))
	}
	b.WriteString("</p>")
	fmt.Fprintf(&b, "<div class=\"caution\" role=\"note\"><strong>Read this first</strong>%s</div>", esc(r.Caution))

	writeSummary(&b, r)
	writeIndex(&b, r)
	writeLegend(&b)
	for i := range r.Holes {
		writeHole(&b, &r.Holes[i], r)
	}
	writeLoggers(&b, r)
	writeProgrammeFindings(&b, r)
	writeMethods(&b, r)
	b.WriteString("<footer>Generated by corvane qa. Findings are computed from the files given; nothing in them was changed.</footer>")
	b.WriteString("</main></body></html>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func pct(x float64) string { return fmt.Sprintf("%.0f%%", 100*x) }

func writeSummary(b *strings.Builder, r qa.Report) {
	s := r.Summary
	b.WriteString("<div class=\"cards\">")
	card := func(v, label string) {
		fmt.Fprintf(b, "<div class=\"card\"><b>%s</b><span>%s</span></div>", v, esc(label))
	}
	card(fmt.Sprint(s.Holes), words.Noun(s.Holes, "hole"))
	card(fmt.Sprint(s.Measurements), words.Noun(s.Measurements, "measurement"))
	card(pct(s.Coverage.OrientedShare), fmt.Sprintf("of %.0f %s of core under orientation runs", s.Coverage.Length, lengthUnit(r.Options.Feet)))
	card(pct(s.Coverage.ConfidentShare), "oriented with confidence")
	card(fmt.Sprint(s.BySeverity[qa.SeverityFlag]), words.Noun(s.BySeverity[qa.SeverityFlag], "flag"))
	card(fmt.Sprint(s.BySeverity[qa.SeverityWarning]), words.Noun(s.BySeverity[qa.SeverityWarning], "warning"))
	card(fmt.Sprint(s.RunsFlagged), words.Noun(s.RunsFlagged, "run")+" with a suspect mark")
	card(fmt.Sprint(s.OutsideRuns+s.InUnusable), words.Noun(s.OutsideRuns+s.InUnusable, "measurement")+" outside usable runs")
	b.WriteString("</div>")
	if len(s.ByCheck) > 0 {
		keys := make([]string, 0, len(s.ByCheck))
		for k := range s.ByCheck {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		b.WriteString("<details><summary>Findings by check</summary><table><tr><th>check</th><th>count</th></tr>")
		for _, k := range keys {
			fmt.Fprintf(b, "<tr><td>%s</td><td class=\"n\">%d</td></tr>", esc(k), s.ByCheck[k])
		}
		b.WriteString("</table></details>")
	}
}

// writeIndex lists the holes with their coverage and counts, linked to
// their sections.
func writeIndex(b *strings.Builder, r qa.Report) {
	if len(r.Holes) == 0 {
		return
	}
	b.WriteString("<details open><summary>Holes</summary><table><tr><th>hole</th><th>depth</th><th>oriented</th><th>with confidence</th><th>measurements</th><th>runs with a suspect mark</th><th>flags</th><th>warnings</th></tr>")
	for _, h := range r.Holes {
		suspect := 0
		for _, run := range h.Runs {
			if run.Rotation != nil && run.Rotation.Flagged {
				suspect++
			}
		}
		fmt.Fprintf(b, "<tr><td><a href=\"#hole-%s\">%s</a></td><td class=\"n\">%.1f</td><td class=\"n\">%s</td><td class=\"n\">%s</td><td class=\"n\">%d</td><td class=\"n\">%d</td><td class=\"n\">%d</td><td class=\"n\">%d</td></tr>",
			esc(h.HoleID), esc(h.HoleID), h.Depth, pct(h.Coverage.OrientedShare), pct(h.Coverage.ConfidentShare), h.Measurements, suspect, h.Flags, h.Warnings)
	}
	b.WriteString("</table></details>")
}

func swatch(fill, stroke string) string {
	return fmt.Sprintf(`<svg width="26" height="12"><rect x="0.5" y="0.5" width="25" height="11" fill="%s" stroke="%s"/></svg>`, fill, stroke)
}

func writeLegend(b *strings.Builder) {
	item := func(svg, text string) {
		fmt.Fprintf(b, "<span class=\"li\">%s%s</span>", svg, text)
	}
	b.WriteString("<div class=\"legend\" aria-label=\"legend\">")
	b.WriteString("<b>Runs:</b>")
	for _, c := range visual.Confidences {
		item(swatch(visual.FillOf(c.Code), colInk), c.Word)
	}
	item(swatch("#fff", colHairline), "no run")
	b.WriteString("<b>QA:</b>")
	for _, v := range visual.Severities {
		if v.Code == qa.SeverityInfo {
			continue // notes are listed, not drawn on the strip
		}
		item(sevMark(v.Code, 14), v.Word)
	}
	item(`<svg width="26" height="12"><rect x="9" y="1" width="8" height="10" fill="`+colPurple+`" stroke="`+colInk+`"/></svg>`, "estimated mark rotation (flagged: outlined, labelled; grey: not flagged; pale: too few measurements)")
	item(`<svg width="14" height="14"><line x1="7" x2="7" y1="2" y2="14" stroke="`+colGreen+`" stroke-width="2"/></svg>`, "survey station (taller: further off its neighbours' path)")
	b.WriteString("</div>")
}

// strip geometry
const (
	stripW    = 1060.0
	padL      = 92.0
	padR      = 40.0
	laneRuns  = 22.0
	laneRotH  = 70.0
	laneFlags = 26.0
	laneSurv  = 22.0
)

func writeHole(b *strings.Builder, h *qa.HoleReport, r qa.Report) {
	fmt.Fprintf(b, "<h2 id=\"hole-%s\">%s</h2>", esc(h.HoleID), esc(h.HoleID))
	fmt.Fprintf(b, "<p class=\"sub\">collar azimuth %.1f, dip %.1f, final depth %.1f &middot; %s &middot; oriented %s, with confidence %s &middot; %s, %s",
		h.Azimuth, h.Dip, h.Depth, words.Plural(h.Measurements, "measurement"), pct(h.Coverage.OrientedShare), pct(h.Coverage.ConfidentShare),
		words.Plural(h.Flags, "flag"), words.Plural(h.Warnings, "warning"))
	if h.Fabric != nil {
		fmt.Fprintf(b, " &middot; %s pole %03.0f/%02.0f (n = %d)", esc(r.Options.PersistentType), h.Fabric.Trend, h.Fabric.Plunge, h.FabricN)
	}
	b.WriteString("</p>")
	var fs []qa.Finding
	for _, f := range r.Findings {
		if f.HoleID == h.HoleID {
			fs = append(fs, f)
		}
	}
	b.WriteString("<div class=\"strip\">")
	writeStrip(b, h, fs)
	b.WriteString("</div>")

	if len(fs) > 0 {
		var main, info []qa.Finding
		for _, f := range fs {
			if f.Severity == qa.SeverityInfo {
				info = append(info, f)
			} else {
				main = append(main, f)
			}
		}
		if len(main) > 0 {
			b.WriteString("<h3>Flags and warnings</h3>")
			findingTable(b, main)
		}
		if len(info) > 0 {
			fmt.Fprintf(b, "<details><summary>%d notes</summary>", len(info))
			findingTable(b, info)
			b.WriteString("</details>")
		}
	}
	writeNets(b, h, r)
	writePicks(b, h)
}

func findingTable(b *strings.Builder, fs []qa.Finding) {
	b.WriteString("<table><tr><th>depth</th><th>check</th><th>what and why</th><th>source</th></tr>")
	for _, f := range fs {
		depth := f1(f.Depth)
		if f.DepthTo > f.Depth {
			depth += "&ndash;" + f1(f.DepthTo)
		}
		src := esc(f.Source)
		if f.Line > 0 {
			src += fmt.Sprintf(" line %d", f.Line)
		}
		fmt.Fprintf(b, "<tr><td class=\"n\">%s</td><td class=\"chk sev-%s\">%s%s</td><td>%s: %s</td><td class=\"chk\">%s</td></tr>",
			depth, esc(f.Severity), sevMark(f.Severity, 13), esc(f.Check), esc(visual.SeverityOf(f.Severity).Word), esc(f.Message), src)
	}
	b.WriteString("</table>")
}

func writeStrip(b *strings.Builder, h *qa.HoleReport, fs []qa.Finding) {
	total := h.Depth
	if total <= 0 {
		total = 1
	}
	x := func(d float64) float64 { return padL + (stripW-padL-padR)*math.Max(0, math.Min(d, total))/total }
	yRuns := 8.0
	yRot := yRuns + laneRuns + 8
	yFlags := yRot + laneRotH + 6
	ySurv := yFlags + laneFlags + 4
	yAxis := ySurv + laneSurv + 4
	height := yAxis + 22
	fmt.Fprintf(b, `<svg role="img" aria-label="depth strip of hole %s" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="system-ui,sans-serif" font-size="11">`,
		esc(h.HoleID), stripW, height, stripW, height)
	label := func(y float64, s string) {
		fmt.Fprintf(b, `<text x="%.0f" y="%.1f" text-anchor="end" fill="%s">%s</text>`, padL-8, y, colMuted, esc(s))
	}
	// Runs lane.
	label(yRuns+laneRuns/2+4, "runs")
	fmt.Fprintf(b, `<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="#fff" stroke="%s"/>`, x(0), yRuns, x(total)-x(0), laneRuns, colHairline)
	for _, run := range h.Runs {
		fill := runFill(run)
		w := math.Max(x(run.To)-x(run.From), 0.6)
		fmt.Fprintf(b, `<rect x="%.2f" y="%.1f" width="%.2f" height="%.1f" fill="%s" stroke="#fff" stroke-width="0.4"><title>run %.2f-%.2f: %s (%s)</title></rect>`,
			x(run.From), yRuns, w, laneRuns, fill, run.From, run.To, esc(run.Confidence), words.Plural(run.Measurements, "measurement"))
	}
	// Rotation lane: bars from a zero line, scale +-60 deg (clipped).
	label(yRot+12, "mark rotation")
	label(yRot+24, "(beta offset)")
	mid := yRot + laneRotH/2
	scale := (laneRotH/2 - 4) / 60
	fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s"/>`, x(0), x(total), mid, mid, colHairline)
	for _, g := range []float64{-30, 30} {
		fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s" stroke-dasharray="2 3"/>`, x(0), x(total), mid-g*scale, mid-g*scale, colHairline)
		fmt.Fprintf(b, `<text x="%.1f" y="%.1f" fill="%s" font-size="9">%+.0f&#176;</text>`, x(total)+2, mid-g*scale+3, colMuted, g)
	}
	for _, run := range h.Runs {
		e := run.Rotation
		if e == nil || e.N == 0 {
			continue
		}
		v := math.Max(-60, math.Min(60, e.Offset))
		y0, y1 := mid, mid-v*scale
		if y1 < y0 {
			y0, y1 = y1, y0
		}
		w := math.Max(x(run.To)-x(run.From)-0.8, 1.2)
		fill, stroke := "#9a9aa0", "none"
		if math.Abs(e.Offset) <= e.HalfWidth95 { // the interval holds zero: drawn faint
			fill = "#d4d4d8"
		}
		if e.Flagged {
			fill, stroke = colPurple, colInk
		}
		fmt.Fprintf(b, `<rect x="%.2f" y="%.2f" width="%.2f" height="%.2f" fill="%s" stroke="%s"><title>run %.2f-%.2f: beta offset %+.1f &#177; %.1f (95%%), n = %d</title></rect>`,
			x(run.From)+0.4, y0, w, math.Max(y1-y0, 0.8), fill, stroke, run.From, run.To, e.Offset, e.HalfWidth95, e.N)
		if e.Flagged {
			ty := mid - v*scale - 3
			if v < 0 {
				ty = mid - v*scale + 11
			}
			fmt.Fprintf(b, `<text x="%.1f" y="%.1f" text-anchor="middle" font-weight="700">%+.0f&#176;</text>`, (x(run.From)+x(run.To))/2, ty, e.Offset)
		}
	}
	// Flags lane.
	label(yFlags+laneFlags/2+4, "flags")
	lastX := math.Inf(-1)
	for _, f := range fs { // sorted by depth: nudge markers that would overlap
		if f.Severity == qa.SeverityInfo || f.HoleID == "" {
			continue
		}
		cx := x(f.Depth)
		if cx < lastX+11 {
			cx = lastX + 11
		}
		lastX = cx
		title := fmt.Sprintf("<title>%s at %.1f: %s</title>", esc(f.Check), f.Depth, esc(f.Message))
		if f.DepthTo > f.Depth {
			fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s" stroke-width="2"/>`, cx, x(f.DepthTo), yFlags+laneFlags-3, yFlags+laneFlags-3, colInk)
		}
		v := visual.SeverityOf(f.Severity)
		fmt.Fprintf(b, `<path d="%s" fill="%s" stroke="#000" stroke-width="1.2">%s</path>`, visual.MarkPath(v.Mark, cx, yFlags+10, 5), v.Fill, title)
	}
	// Survey lane: a tick per station, taller with the leave-one-out residual.
	label(ySurv+laneSurv/2+4, "survey")
	fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s"/>`, x(0), x(total), ySurv+laneSurv, ySurv+laneSurv, colHairline)
	for _, s := range h.Stations {
		hgt := 6.0
		if s.Residual > 0 {
			hgt += math.Min(s.Residual*4, laneSurv-6)
		}
		fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s" stroke-width="2"><title>station %.1f: azimuth %.1f, dip %.1f, residual %.2f deg, DLS %.2f</title></line>`,
			x(s.Depth), x(s.Depth), ySurv+laneSurv, ySurv+laneSurv-hgt, colGreen, s.Depth, s.Azimuth, s.Dip, s.Residual, s.DLS)
	}
	// Depth axis.
	step := niceStep(total / 10)
	fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s"/>`, x(0), x(total), yAxis, yAxis, colInk)
	for d := 0.0; d <= total+1e-9; d += step {
		fmt.Fprintf(b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s"/><text x="%.1f" y="%.1f" text-anchor="middle">%g</text>`,
			x(d), x(d), yAxis, yAxis+4, colInk, x(d), yAxis+15, d)
	}
	label(yAxis+15, "depth")
	b.WriteString("</svg>")
}

func niceStep(raw float64) float64 {
	if raw <= 0 {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= raw {
			return m * p
		}
	}
	return 10 * p
}

// net geometry
const netR = 62.0

func netSVG(title string, poles []qa.Pole, ref qa.Pole, filled bool) string {
	var b strings.Builder
	size := 2*netR + 28
	cx, cy := size/2, size/2+8
	fmt.Fprintf(&b, `<svg role="img" aria-label="%s" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" font-family="system-ui,sans-serif" font-size="10">`, esc(title), size, size+24, size, size+24)
	fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="%.1f" fill="#fff" stroke="%s" stroke-width="1.2"/>`, cx, cy, netR, colInk)
	fmt.Fprintf(&b, `<line x1="%.1f" x2="%.1f" y1="%.1f" y2="%.1f" stroke="%s"/><text x="%.1f" y="%.1f" text-anchor="middle">N</text>`, cx, cx, cy-netR, cy-netR-5, colInk, cx, cy-netR-7)
	fmt.Fprintf(&b, `<path d="M%.1f %.1fh6M%.1f %.1fv6" stroke="%s"/>`, cx-3, cy, cx, cy-3, colHairline)
	pt := func(p qa.Pole) (float64, float64) {
		q := projection.EqualArea.ProjectLine(geom.Line{Trend: p.Trend, Plunge: p.Plunge})
		return cx + netR*q.X, cy - netR*q.Y
	}
	// The reference fabric: its plane as a dashed great circle and its pole
	// as a ring with a cross, drawn under the measurements.
	refPlane := geom.PlaneOf(geom.FromTrendPlunge(ref.Trend, ref.Plunge))
	var gc strings.Builder
	for i, q := range projection.EqualArea.GreatCircle(refPlane, 90) {
		cmd := "L"
		if i == 0 {
			cmd = "M"
		}
		fmt.Fprintf(&gc, "%s%.1f %.1f", cmd, cx+netR*q.X, cy-netR*q.Y)
	}
	fmt.Fprintf(&b, `<path d="%s" fill="none" stroke="%s" stroke-dasharray="4 3"/>`, gc.String(), colMuted)
	x, y := pt(ref)
	fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="9" fill="none" stroke="%s" stroke-width="1.4"/><path d="M%.1f %.1fh18M%.1f %.1fv18" stroke="%s" stroke-width="0.8"/>`,
		x, y, colInk, x-9, y, x, y-9, colInk)
	for _, p := range poles {
		x, y := pt(p)
		if filled {
			fmt.Fprintf(&b, `<path d="M%.1f %.1fl3.2 3.2l-3.2 3.2l-3.2-3.2z" fill="%s" stroke="%s" stroke-width="0.6"/>`, x, y-3.2, colBlue, colInk)
		} else {
			fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="2.8" fill="none" stroke="%s" stroke-width="1.2"/>`, x, y, colVermil)
		}
	}
	fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`, cx, cy+netR+16, esc(title))
	b.WriteString("</svg>")
	return b.String()
}

func writeNets(b *strings.Builder, h *qa.HoleReport, r qa.Report) {
	var flagged []qa.RunReport
	for _, run := range h.Runs {
		if run.Rotation != nil && run.Rotation.Flagged {
			flagged = append(flagged, run)
		}
	}
	if len(flagged) == 0 {
		return
	}
	fmt.Fprintf(b, "<h3>Runs with a suspect mark: %s poles before and after the suggested correction</h3>", esc(r.Options.PersistentType))
	b.WriteString(`<div class="legend"><svg width="12" height="12"><circle cx="6" cy="6" r="3" fill="none" stroke="` + colVermil + `" stroke-width="1.2"/></svg>as logged` +
		`<svg width="12" height="12"><path d="M6 2.5l3.2 3.2l-3.2 3.2l-3.2-3.2z" fill="` + colBlue + `" stroke="` + colInk + `" stroke-width="0.6"/></svg>with the suggested beta offset` +
		`<svg width="20" height="20"><circle cx="10" cy="10" r="8" fill="none" stroke="` + colInk + `" stroke-width="1.4"/><path d="M2 10h16M10 2v16" stroke="` + colInk + `" stroke-width="0.8"/></svg>reference fabric pole` +
		`<svg width="26" height="12"><path d="M1 6h24" stroke="` + colMuted + `" stroke-dasharray="4 3"/></svg>its plane` +
		`&nbsp; lower-hemisphere equal-area nets, north up</div>`)
	b.WriteString("<div class=\"nets\">")
	for _, run := range flagged {
		e := run.Rotation
		fmt.Fprintf(b, "<div class=\"net\"><b>run %.2f&ndash;%.2f</b> (%s) &middot; offset %+.1f&#176; &#177; %.1f, n = %d<br>", run.From, run.To, esc(run.Confidence), e.Offset, e.HalfWidth95, e.N)
		b.WriteString(netSVG("as logged", e.Before, e.Reference, false))
		b.WriteString(netSVG("suggested", e.After, e.Reference, true))
		fmt.Fprintf(b, "<br>median misfit %.1f&#176; &rarr; %.1f&#176;", e.MisfitBefore, e.MisfitAfter)
		if len(run.Suggestions) > 0 {
			fmt.Fprintf(b, "<details><summary>%d suggested corrections (not applied)</summary><table><tr><th>line</th><th>depth</th><th>type</th><th>beta</th><th>suggested</th><th>dip/dir</th><th>suggested</th></tr>", len(run.Suggestions))
			for _, s := range run.Suggestions {
				fmt.Fprintf(b, "<tr><td class=\"n\">%d</td><td class=\"n\">%.2f</td><td>%s</td><td class=\"n\">%.1f</td><td class=\"n\">%.1f</td><td class=\"n\">%02.0f/%03.0f</td><td class=\"n\">%02.0f/%03.0f</td></tr>",
					s.Line, s.Depth, esc(s.Type), s.Beta, s.SuggestedBeta, s.Dip, s.DipDirection, s.SuggestedDip, s.SuggestedDipDirection)
			}
			b.WriteString("</table></details>")
		}
		b.WriteString("</div>")
	}
	b.WriteString("</div>")
}

func writePicks(b *strings.Builder, h *qa.HoleReport) {
	p := h.Picks
	if p == nil {
		return
	}
	b.WriteString("<h3>Reference picks</h3>")
	fmt.Fprintf(b, "<p>%s, %d matched after a depth shift of %+.2f (core depth = pick depth %+.2f); misfit median %.1f&#176;, 90th percentile %.1f&#176;, max %.1f&#176;; %s and %s in the picked interval unmatched.</p>",
		words.Plural(p.Picks, "pick"), p.Matched, p.Shift, p.Shift, p.Misfit.Median, p.Misfit.P90, p.Misfit.Max, words.Plural(len(p.UnmatchedPicks), "pick"), words.Plural(p.UnmatchedCore, "core measurement"))
	b.WriteString("<table><tr><th>run</th><th>matches</th><th>median misfit</th><th>implied beta offset</th></tr>")
	for _, run := range h.Runs {
		if run.Picks == nil {
			continue
		}
		off := "&ndash;"
		cls := ""
		if e := run.Picks.Offset; e != nil {
			off = fmt.Sprintf("%+.1f &#177; %.1f (n = %d)", e.Offset, e.HalfWidth95, e.N)
			if e.Flagged {
				cls = ` class="sev-flag"`
			}
		}
		fmt.Fprintf(b, "<tr><td class=\"n\">%.2f&ndash;%.2f</td><td class=\"n\">%d</td><td class=\"n\">%.1f</td><td%s>%s</td></tr>", run.From, run.To, run.Picks.Misfit.N, run.Picks.Misfit.Median, cls, off)
	}
	b.WriteString("</table>")
}

func digitBars(counts [10]int) string {
	max := 1
	for _, c := range counts {
		if c > max {
			max = c
		}
	}
	var b strings.Builder
	b.WriteString(`<svg width="112" height="30" font-size="8" font-family="system-ui,sans-serif">`)
	for d, c := range counts {
		h := 20 * float64(c) / float64(max)
		fill := "#9a9aa0"
		if d == 0 || d == 5 {
			fill = colInk
		}
		fmt.Fprintf(&b, `<rect x="%d" y="%.1f" width="9" height="%.1f" fill="%s"/><text x="%d" y="29" text-anchor="middle">%d</text>`, 1+11*d, 21-h, h, fill, 5+11*d, d)
	}
	b.WriteString("</svg>")
	return b.String()
}

func writeLoggers(b *strings.Builder, r qa.Report) {
	if len(r.Digits) == 0 {
		return
	}
	b.WriteString("<h2>Loggers</h2><p class=\"sub\">Terminal-digit preference test (Pearson chi-square on the last digit of whole degrees, 9 degrees of freedom): estimated angles pile up on 0 and 5. Beta exactly 0 or 360: exact binomial test against 1 in 360.</p>")
	b.WriteString("<table><tr><th>logger</th><th>angle</th><th>n</th><th>last digits 0&ndash;9</th><th>share 0/5</th><th>chi-square</th><th>p</th><th>result</th></tr>")
	for _, d := range r.Digits {
		res := "not tested (too few)"
		if d.Tested {
			res = "no preference shown"
			if d.Flagged {
				res = "<span class=\"sev-flag\">round-number preference</span>"
			}
		}
		fmt.Fprintf(b, "<tr><td>%s</td><td>%s</td><td class=\"n\">%d</td><td>%s</td><td class=\"n\">%s</td><td class=\"n\">%.1f</td><td class=\"n\">%.2g</td><td>%s</td></tr>",
			esc(d.Logger), esc(d.Angle), d.N, digitBars(d.Counts), pct(d.Share05), d.Chi2, d.P, res)
	}
	b.WriteString("</table><table><tr><th>logger</th><th>betas</th><th>exactly 0 or 360</th><th>share</th><th>p</th><th>result</th></tr>")
	for _, z := range r.BetaZero {
		res := "as expected"
		if z.Flagged {
			res = "<span class=\"sev-flag\">in bulk</span>"
		}
		fmt.Fprintf(b, "<tr><td>%s</td><td class=\"n\">%d</td><td class=\"n\">%d</td><td class=\"n\">%.1f%%</td><td class=\"n\">%.2g</td><td>%s</td></tr>",
			esc(z.Logger), z.N, z.Zeros, 100*z.Share, z.P, res)
	}
	b.WriteString("</table>")
}

func writeProgrammeFindings(b *strings.Builder, r qa.Report) {
	var fs []qa.Finding
	known := map[string]bool{}
	for _, h := range r.Holes {
		known[h.HoleID] = true
	}
	for _, f := range r.Findings {
		if !known[f.HoleID] {
			fs = append(fs, f)
		}
	}
	if len(fs) == 0 {
		return
	}
	b.WriteString("<h2>Programme-wide findings</h2>")
	findingTable(b, fs)
}

func writeMethods(b *strings.Builder, r qa.Report) {
	o := r.Options
	b.WriteString("<h2>Methods and thresholds</h2><ul class=\"methods\">")
	items := []string{
		fmt.Sprintf("Mark rotation: for each run, the beta offset that turns each %s pole about the core axis onto the reference fabric; the run's estimate is the mean of these offsets weighted by their variances from the error model (beta reading %.1f&#176;, rounding loggers wider; fabric scatter from the misfits no rotation removes), with the reference's own uncertainty and its runs' mark errors (good %.0f&#176;, fair %.0f&#176;, poor %.0f&#176;) and Student's t. Reference: principal axis of the orientation tensor of the %d nearest runs on each side with the run left out (Scheidegger 1965), or the hole-wide fabric. Flagged when the 95%% interval excludes zero by more than %.0f&#176;, from however many measurements the run has. Uncertainty figures depend on the error model chosen.",
			esc(orDash(o.PersistentType)), o.Errors.Beta, o.Errors.MarkGood, o.Errors.MarkFair, o.Errors.MarkPoor, o.Neighbours, o.RotationTolerance),
		fmt.Sprintf("Reference picks: constant depth shift by grid search (&#177;%.1f, step %.2f), then nearest-depth matching within %.2f; misfit is the angle between poles.", o.MaxDepthShift, o.ShiftStep, o.PickWindow),
		fmt.Sprintf("Survey: dogleg severity above %.1f per 30 m (or per 100 ft) (common practice); leave-one-out residual of each station against the minimum-curvature arc of its neighbours, flagged above %.0f &times; the median residual of the hole's other stations (its neighbours left out; %.1f&#176; assumed when fewer than three remain) and %.1f&#176; (residuals of normal shot errors are Rayleigh distributed: the limit is about 4.7 standard deviations); gaps over %.0f; last station more than %.0f above the final depth; first station more than %.0f&#176; (plus the dogleg allowance) from the collar; magnetic shots inside marked magnetic zones.",
			o.DoglegThreshold, o.OutlierFactor, o.NominalResidual, o.OutlierFloor, o.GapThreshold, o.ShortTolerance, o.CollarTolerance),
		fmt.Sprintf("Runs: mark mismatch across a run break above %.0f&#176; (common practice, adjustable); confident ratings: %s; unusable: %s.", o.MismatchTolerance, esc(strings.Join(o.ConfidentRatings, ", ")), esc(strings.Join(o.UnusableRatings, ", "))),
		fmt.Sprintf("Measurements: alpha &ge; %.0f&#176;; hole within %.0f&#176; of vertical; depth past the final depth; repeated rows; terminal-digit preference (Pearson 1900 chi-square, p &lt; %g and share of 0/5 &ge; %.0f%%); beta 0/360 in bulk (exact binomial, p &lt; %g).",
			o.HighAlpha, o.NearVertical, o.DigitP, 100*o.DigitShare05, o.BetaZeroP),
	}
	for _, it := range items {
		fmt.Fprintf(b, "<li>%s</li>", it)
	}
	b.WriteString("</ul>")
}

func orDash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// lengthUnit names the unit of depths.
func lengthUnit(feet bool) string {
	if feet {
		return "ft"
	}
	return "m"
}
