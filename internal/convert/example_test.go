package convert_test

import (
	"context"
	"corvane/internal/holemodel"
	"fmt"
	"os"
	"strings"

	"corvane/internal/convert"
)

// Convert a small programme: one hole surveyed against magnetic north with a
// declination of 2.0 and a grid convergence of 0.5 given for all holes; the
// output is referenced to grid north. The survey was made with a magnetic
// instrument; the last columns are each measurement's 95% pole and line
// regions under the default error model.
func ExampleHoles_Convert() {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth\nKX01,5000,8000,420,45,-60,150\n"
	surveys := "hole_id,depth,azimuth,dip,azimuth_reference,instrument\nKX01,0,43.5,-60,magnetic,magnetic\nKX01,90,45.5,-57,magnetic,magnetic\n"
	structures := "hole_id,depth,alpha,beta,gamma,type\nKX01,35.2,45,90,,joint\nKX01,120,30,180,40,fault\n"
	hs, err := convert.Load(strings.NewReader(collars), strings.NewReader(surveys), convert.Options{
		Declination:     convert.Given{Value: 2.0, Set: true},
		GridConvergence: convert.Given{Value: 0.5, Set: true},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	sum, err := hs.Convert(context.Background(), strings.NewReader(structures), os.Stdout)
	fmt.Println(sum.Rows, sum.BadRows, err)
	// Output:
	// hole_id,depth,alpha,beta,gamma,type,hole_azimuth,hole_dip,easting,northing,elevation,dip,dip_direction,strike,line_trend,line_plunge,warnings,pole_trend,pole_plunge,azimuth_reference,declination,declination_source,grid_convergence,convergence_source,survey_set,pole_cone95,pole_long95,pole_short95,pole_method,line_cone95,line_long95,line_short95,line_method,survey_instrument,error
	// KX01,35.2,45,90,,joint,45.82,-58.83,5012.756,8012.571,389.698,52.77,288.46,198.46,,,,108.46,37.23,grid,2.000,project,0.500,project,survey,14.75,18.22,5.25,first-order,,,,,magnetic,
	// KX01,120,30,180,40,fault,47.00,-57.00,5045.793,8043.776,318.109,27.00,47.00,317.00,90.28,20.35,extrapolated below last survey station,227.00,63.00,grid,2.000,project,0.500,project,survey,17.89,22.19,4.95,first-order,16.38,20.21,6.13,first-order,magnetic,
	// 2 0 <nil>
}

// Orient converts one measurement without CSV.
func ExampleHoles_Orient() {
	collars := "hole_id,easting,northing,elevation,azimuth,dip,depth\nKX01,5000,8000,420,0,-60,150\n"
	surveys := "hole_id,depth,azimuth,dip\n"
	hs, _ := convert.Load(strings.NewReader(collars), strings.NewReader(surveys), convert.Options{})
	r, err := hs.Orient(convert.Measurement{HoleID: "KX01", Measurement: holemodel.Measurement{Depth: 50, Alpha: 20, Beta: 180}})
	fmt.Printf("%.1f/%.1f at E %.1f N %.1f Z %.1f, %v\n", r.Plane.DipDirection, r.Plane.Dip, r.Point.Pos.X, r.Point.Pos.Y, r.Point.Pos.Z, err)
	// Output: 0.0/40.0 at E 5000.0 N 8025.0 Z 376.7, <nil>
}
