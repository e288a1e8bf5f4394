package qa_test

import (
	"fmt"

	"corvane/internal/qa"
)

// A hole surveyed every 30 m whose shot at 90 m reads 4 degrees of azimuth
// off the path of its neighbours (2.1 degrees of direction at a dip of
// -58.5), and a measurement logged past the end.
func ExampleRun() {
	in := qa.Input{
		Collars: []qa.Collar{{HoleID: "KW7", Azimuth: 120, Dip: -60, Depth: 300}},
		Runs:    []qa.OrientationRun{{HoleID: "KW7", From: 0, To: 300, Confidence: "good"}},
		Measurements: []qa.Measurement{
			{HoleID: "KW7", Depth: 42.5, Alpha: 35, Beta: 210, Type: "joint", Line: 2},
			{HoleID: "KW7", Depth: 301.2, Alpha: 50, Beta: 80, Type: "joint", Line: 3},
		},
	}
	for d := 30.0; d <= 300; d += 30 {
		az := 120.0
		if d == 90 {
			az = 124
		}
		in.Surveys = append(in.Surveys, qa.Station{HoleID: "KW7", Depth: d, Azimuth: az, Dip: -60 + d/60})
	}
	rep := qa.Run(in, qa.Options{})
	for _, f := range rep.Findings {
		fmt.Printf("%s %s at %.1f (size %.1f)\n", f.Severity, f.Check, f.Depth, f.Size)
	}
	fmt.Printf("oriented with confidence: %.0f%%\n", 100*rep.Summary.Coverage.ConfidentShare)
	// Output:
	// flag survey-shot-outlier at 90.0 (size 2.1)
	// flag depth-past-final-depth at 301.2 (size 1.2)
	// oriented with confidence: 100%
}
