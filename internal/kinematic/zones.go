package kinematic

import (
	"math"

	"corvane/internal/geom"
)

// Zone is a critical zone of a check as a closed outline of lower-hemisphere
// directions, for shading on a net. Of says what falls in it: "poles" (poles
// of planes) or "intersections" (intersection lines).
type Zone struct {
	Check   string // "planar", "wedge", "flexural", "direct", "direct-oblique", "base"
	Label   string
	Of      string
	Outline []geom.Vec3
}

// steps per outline edge
const zoneSteps = 90

func pole(dipDir, dip float64) geom.Vec3 {
	return geom.Plane{Dip: dip, DipDirection: geom.NormAzimuth(dipDir)}.Normal()
}

func line(trend, plunge float64) geom.Vec3 {
	return geom.FromTrendPlunge(geom.NormAzimuth(trend), plunge)
}

// Zones returns the critical zones of the checks named in checks ("planar",
// "wedge", "flexural", "direct"; direct gives its primary and oblique zones
// and the base-plane zone). A zone that is empty for these parameters (e.g.
// planar sliding when the face is no steeper than the friction angle) is
// left out. Each outline traces the boundary used by the matching test
// method, so a pole or line inside the outline is one the method counts
// (up to the drawing's resolution).
func (p Params) Zones(checks ...string) []Zone {
	var zs []Zone
	fdd, phi, lat := p.Face.DipDirection, p.Friction, p.Lateral
	for _, c := range checks {
		switch c {
		case "planar":
			// poles of planes with dip direction fdd +- lat, friction < dip < apparent dip
			var out []geom.Vec3
			any := false
			for i := 0; i <= zoneSteps; i++ {
				dd := fdd - lat + 2*lat*float64(i)/zoneSteps
				out = append(out, pole(dd, phi))
			}
			for i := zoneSteps; i >= 0; i-- {
				dd := fdd - lat + 2*lat*float64(i)/zoneSteps
				a := p.apparentDip(dd)
				if a > phi {
					any = true
				}
				out = append(out, pole(dd, math.Max(a, phi)))
			}
			if any {
				zs = append(zs, Zone{Check: c, Label: "planar sliding", Of: "poles", Outline: out})
			}
		case "wedge":
			// lines plunging between the friction angle and the face's apparent dip
			ratio := math.Tan(geom.Rad(phi)) / math.Tan(geom.Rad(p.Face.Dip))
			if p.Face.Dip >= 90 {
				ratio = 0
			}
			if ratio >= 1 {
				continue
			}
			half := geom.Deg(math.Acos(ratio))
			var out []geom.Vec3
			for i := 0; i <= zoneSteps; i++ {
				t := fdd - half + 2*half*float64(i)/zoneSteps
				out = append(out, line(t, math.Max(p.apparentDip(t), phi)))
			}
			for i := zoneSteps; i >= 0; i-- {
				t := fdd - half + 2*half*float64(i)/zoneSteps
				out = append(out, line(t, phi))
			}
			zs = append(zs, Zone{Check: c, Label: "wedge sliding", Of: "intersections", Outline: out})
		case "flexural":
			// poles plunging less than face dip - friction toward fdd +- lat
			top := p.Face.Dip - phi
			if top <= 0 {
				continue
			}
			var out []geom.Vec3
			for i := 0; i <= zoneSteps; i++ {
				t := fdd - lat + 2*lat*float64(i)/zoneSteps
				out = append(out, line(t, 0))
			}
			for i := zoneSteps; i >= 0; i-- {
				t := fdd - lat + 2*lat*float64(i)/zoneSteps
				out = append(out, line(t, top))
			}
			zs = append(zs, Zone{Check: c, Label: "flexural toppling", Of: "poles", Outline: out})
		case "direct":
			back := fdd + 180
			sector := func(from, to float64) []geom.Vec3 {
				out := []geom.Vec3{{Z: -1}}
				for i := 0; i <= zoneSteps; i++ {
					out = append(out, line(from+(to-from)*float64(i)/zoneSteps, 0))
				}
				return out
			}
			zs = append(zs,
				Zone{Check: "direct", Label: "direct toppling", Of: "intersections", Outline: sector(back-lat, back+lat)},
				Zone{Check: "direct-oblique", Label: "oblique toppling", Of: "intersections", Outline: sector(back+lat, back+90)},
				Zone{Check: "direct-oblique", Label: "oblique toppling", Of: "intersections", Outline: sector(back-90, back-lat)})
			// base planes: poles of planes dipping out of the face at less than friction
			var out []geom.Vec3
			for i := 0; i <= zoneSteps; i++ {
				dd := fdd - 90 + 180*float64(i)/zoneSteps
				out = append(out, pole(dd, phi))
			}
			out = append(out, geom.Vec3{Z: -1})
			zs = append(zs, Zone{Check: "base", Label: "toppling base planes", Of: "poles", Outline: out})
		}
	}
	return zs
}
