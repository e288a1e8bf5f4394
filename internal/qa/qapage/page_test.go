package qapage

import (
	"bytes"
	"encoding/xml"
	"io"
	"os"
	"regexp"
	"strings"
	"testing"

	"corvane/internal/qa"
	"corvane/internal/visual"
)

func sampleReport() qa.Report {
	mm := 24.0
	rot := &qa.RotationEstimate{Offset: -33, SE: 1.1, HalfWidth95: 2.2, N: 6, Reference: qa.Pole{Trend: 220, Plunge: 40}, ReferenceN: 36,
		RefSource: "neighbours", MisfitBefore: 31, MisfitAfter: 4, Flagged: true,
		Before: []qa.Pole{{Trend: 250, Plunge: 30}, {Trend: 255, Plunge: 35}}, After: []qa.Pole{{Trend: 221, Plunge: 41}, {Trend: 218, Plunge: 39}}}
	h := qa.HoleReport{HoleID: "KW-01 <test>", Depth: 120, Azimuth: 70, Dip: -60, Measurements: 40,
		Coverage: qa.Coverage{Length: 120, Oriented: 110, Confident: 100, OrientedShare: 110.0 / 120, ConfidentShare: 100.0 / 120},
		Fabric:   &qa.Pole{Trend: 220, Plunge: 40}, FabricN: 30,
		Runs: []qa.RunReport{
			{From: 0, To: 3, Confidence: "good", Class: qa.ClassConfident, Rotation: &qa.RotationEstimate{Offset: 2, N: 6}},
			{From: 3, To: 6, Confidence: "poor", Class: qa.ClassOther, Mismatch: &mm, Rotation: rot,
				Suggestions: []qa.Suggestion{{Line: 7, Depth: 4.2, Type: "bedding", Alpha: 30, Beta: 200, SuggestedBeta: 167, Dip: 60, DipDirection: 10, SuggestedDip: 50, SuggestedDipDirection: 40}}},
			{From: 6, To: 9, Confidence: "none", Class: qa.ClassUnusable},
		},
		Stations: []qa.StationReport{{Depth: 30, Azimuth: 70, Dip: -59, Residual: -1}, {Depth: 60, Azimuth: 74, Dip: -58, Residual: 3.2}, {Depth: 90, Azimuth: 71, Dip: -57, Residual: -1}},
		Picks:    &qa.HolePicks{Shift: 0.8, Picks: 10, Matched: 9, Misfit: qa.MisfitStats{N: 9, Median: 4}},
	}
	return qa.Report{Caution: qa.Caution, Convention: "bottom/downhole/clockwise", Options: qa.DefaultOptions(), Holes: []qa.HoleReport{h},
		Digits: []qa.DigitTest{{Logger: "bo", Angle: "alpha", N: 100, Counts: [10]int{40, 5, 5, 5, 5, 30, 5, 5, 0, 0}, Tested: true, Flagged: true, Chi2: 150, P: 1e-20, Share05: 0.7}},
		Findings: []qa.Finding{
			{Check: qa.CheckMarkRotation, Severity: qa.SeverityFlag, HoleID: h.HoleID, Depth: 3, DepthTo: 6, Message: "run rotated & <odd>"},
			{Check: qa.CheckSurveyOutlier, Severity: qa.SeverityFlag, HoleID: h.HoleID, Depth: 60, Message: "station off"},
			{Check: qa.CheckUnusableRun, Severity: qa.SeverityWarning, HoleID: h.HoleID, Depth: 6, DepthTo: 9, Message: "unusable"},
			{Check: qa.CheckHighAlpha, Severity: qa.SeverityInfo, HoleID: h.HoleID, Depth: 50, Message: "alpha 88"},
			{Check: qa.CheckDigitPreference, Severity: qa.SeverityWarning, Logger: "bo", Message: "round numbers"},
		}}
}

var svgRE = regexp.MustCompile(`(?s)<svg.*?</svg>`)

// The page is self-contained (no external resources, no scripts), states the
// caution, escapes text, and every inline SVG is well-formed XML.
func TestWritePage(t *testing.T) {
	var buf bytes.Buffer
	if err := Write(&buf, sampleReport(), "Kestrel Wells QA"); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, bad := range []string{"http://", "https://", "<script", "<link", "@import", "src="} {
		if strings.Contains(page, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
	for _, want := range []string{"do not replace it", "KW-01 &lt;test&gt;", "run rotated &amp; &lt;odd&gt;", "as logged", "suggested", "round-number preference", "Reference picks", `href="#hole-KW-01 &lt;test&gt;"`} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	svgs := svgRE.FindAllString(page, -1)
	if len(svgs) < 5 {
		t.Fatalf("%d inline SVGs", len(svgs))
	}
	for i, s := range svgs {
		d := xml.NewDecoder(strings.NewReader(s))
		d.Entity = xml.HTMLEntity
		for {
			_, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("svg %d not well-formed: %v\n%s", i, err, s[:min(len(s), 400)])
			}
		}
	}
	if dir := os.Getenv("QAPAGE_DUMP"); dir != "" { // for looking at the figures
		os.WriteFile(dir+"/page.html", buf.Bytes(), 0o644)
		for i, s := range svgs {
			s = strings.Replace(s, "<svg", `<svg xmlns="http://www.w3.org/2000/svg"`, 1)
			os.WriteFile(dir+"/svg"+string(rune('a'+i))+".svg", []byte(svgs[0][:0]+s), 0o644)
		}
	}
}

// The report speaks the visual language of the page: the same words and
// fills for run confidence, the same words and marks for severity.
func TestSameLanguageAsThePage(t *testing.T) {
	var buf bytes.Buffer
	if err := Write(&buf, sampleReport(), "QA"); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, c := range visual.Confidences {
		if !strings.Contains(page, `fill="`+visual.FillOf(c.Code)+`"`) || !strings.Contains(page, c.Word) {
			t.Errorf("run confidence %s: no swatch filled %s worded %q", c.Code, visual.FillOf(c.Code), c.Word)
		}
	}
	// The sample's runs are rated good, poor and none: each is drawn with its fill.
	for _, r := range []string{"good", "poor", "none"} {
		if !regexp.MustCompile(`<rect [^>]*fill="` + regexp.QuoteMeta(visual.FillOf(r)) + `"[^>]*><title>run [^<]*: ` + r).MatchString(page) {
			t.Errorf("no run rated %s drawn with %s", r, visual.FillOf(r))
		}
	}
	for _, v := range visual.Severities[:2] {
		mark := visual.MarkPath(v.Mark, 7, 7, 14*0.3)
		if !strings.Contains(page, mark) || !strings.Contains(page, ">"+v.Word+"<") {
			t.Errorf("severity %s: legend lacks its mark or the word %q", v.Code, v.Word)
		}
	}
	if strings.Contains(page, "p-other") || strings.Contains(page, "p-unusable") {
		t.Error("the report still uses its own run patterns")
	}
}
