package utm

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// TestEPSGAgainstPROJ checks every line of testdata/proj_checks.txt, made by
// testdata/make_proj_checks.sh with PROJ 9.1.1 (Debian proj-bin): the zone,
// hemisphere and ellipsoid of each code as PROJ's EPSG database defines
// them, and easting, northing (1 mm), convergence (1e-6 degree) and scale
// factor (PROJ prints 8 decimals) forward and back.
func TestEPSGAgainstPROJ(t *testing.T) {
	fh, err := os.Open("testdata/proj_checks.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	sc := bufio.NewScanner(fh)
	line, n := 0, 0
	families := map[string]bool{}
	for sc.Scan() {
		line++
		text, def, _ := strings.Cut(sc.Text(), "#")
		f := strings.Fields(text)
		if len(f) == 0 {
			continue
		}
		if len(f) != 7 {
			t.Fatalf("line %d: %d fields", line, len(f))
		}
		v := make([]float64, 7)
		for i, s := range f {
			if v[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatalf("line %d: %v", line, err)
			}
		}
		code := int(v[0])
		crs, err := LookupEPSG(code)
		if err != nil {
			t.Errorf("line %d: %v", line, err)
			continue
		}
		families[crs.Family] = true
		n++
		// The table's zone, hemisphere and ellipsoid are EPSG's.
		wantZone := "+zone=" + strconv.Itoa(crs.Zone.Number) + " "
		south := strings.Contains(def, "+south")
		wgs := strings.Contains(def, "WGS84")
		if !strings.Contains(def, wantZone) || south != crs.Zone.South || wgs != (crs.TM.Ellipsoid == EllipsoidWGS84) {
			t.Errorf("line %d: EPSG:%d is %s on %s in our table, PROJ says %s", line, code, crs.Zone, crs.TM.Ellipsoid.Name, def)
		}
		g, err := crs.TM.Forward(v[1], v[2])
		if err != nil {
			t.Errorf("line %d: %v", line, err)
			continue
		}
		if math.Abs(g.Easting-v[3]) > 1e-3 || math.Abs(g.Northing-v[4]) > 1e-3 ||
			math.Abs(g.Convergence-v[5]) > 1e-6 || math.Abs(g.Scale-v[6]) > 1e-8 {
			t.Errorf("line %d EPSG:%d: E %.6f N %.6f C %.9f k %.9f; PROJ %v %v %v %v", line, code, g.Easting, g.Northing, g.Convergence, g.Scale, v[3], v[4], v[5], v[6])
		}
		p, err := crs.TM.Inverse(v[3], v[4])
		if err != nil || math.Abs(p.Lat-v[1]) > 1e-9 || math.Abs(p.Lon-v[2]) > 1e-9 || math.Abs(p.Convergence-v[5]) > 1e-6 {
			t.Errorf("line %d EPSG:%d inverse: %+v %v", line, code, p, err)
		}
	}
	if n < 20 || len(families) != len(Families) {
		t.Errorf("%d check points over %d families; want every family", n, len(families))
	}
}

func TestLookupEPSGUnknown(t *testing.T) {
	for _, code := range []int{2193, 32661, 26924, 25839, 28359, 7845, 31986, 0} {
		_, err := LookupEPSG(code)
		if err == nil || !strings.Contains(err.Error(), "not a supported coordinate system") || !strings.Contains(err.Error(), "GDA2020 / MGA EPSG:7846-7859 (zones 46S-59S)") {
			t.Errorf("EPSG:%d: %v", code, err)
		}
	}
	c, err := LookupEPSG(7850)
	if err != nil || c.Name != "GDA2020 / MGA zone 50" || c.Zone != (Zone{50, true}) {
		t.Errorf("7850: %+v %v", c, err)
	}
	c, err = LookupEPSG(3373)
	if err != nil || c.Name != "NAD83 / UTM zone 60N" {
		t.Errorf("3373: %+v %v", c, err)
	}
}

// UTM on WGS 84 through the table equals the package's UTM functions.
func TestTableMatchesUTM(t *testing.T) {
	c, _ := LookupEPSG(32750)
	a, _ := c.TM.Forward(-31.95, 115.86)
	b, _ := Forward(Zone{50, true}, -31.95, 115.86)
	if a != b {
		t.Errorf("table %+v, Forward %+v", a, b)
	}
}
