package projection_test

import (
	"fmt"

	"corvane/internal/geom"
	"corvane/internal/projection"
)

// A line plunging 30 toward 090 lies at sqrt(2) sin(30) = 0.7071 east of the
// centre on the equal-area net and at tan(30) = 0.5774 on the equal-angle net.
func ExampleKind_ProjectLine() {
	l := geom.Line{Trend: 90, Plunge: 30}
	for _, k := range []projection.Kind{projection.EqualArea, projection.EqualAngle} {
		p := k.ProjectLine(l)
		fmt.Printf("%s: x %.4f y %.4f\n", k, p.X, p.Y)
	}
	// Output:
	// equal-area: x 0.7071 y 0.0000
	// equal-angle: x 0.5774 y 0.0000
}
