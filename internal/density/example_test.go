package density_test

import (
	"fmt"

	"corvane/internal/density"
)

// Kamb's counting cap for 100 poles (Kamb 1959): area fraction 9/(N+9).
func ExampleKambArea() {
	a, theta := density.KambArea(100)
	fmt.Printf("A %.6f, half-angle %.3f degrees\n", a, theta)
	// Output: A 0.082569, half-angle 23.447 degrees
}
