// Package igrf evaluates the International Geomagnetic Reference Field,
// 14th generation (IGRF-14), for any date from 1900.0 to 2030.0.
//
// The coefficients are the file IGRF14.SHC published by IAGA Working Group
// V-MOD (2025), embedded here unchanged: Schmidt semi-normalised Gauss
// coefficients in nT to degree 13, one column per five-year epoch 1900.0 to
// 2025.0 and a 2030.0 column (the 2025.0 values carried forward by the
// predicted secular variation, degree 8; higher degrees constant). Between
// two epochs each coefficient is interpolated linearly in time, which is the
// model's definition (Alken, P. et al. (2021), "International Geomagnetic
// Reference Field: the thirteenth generation", Earth, Planets and Space 73:49;
// method unchanged in generation 14). The yearly change of the field is the
// difference of the two epochs bounding the date over five years.
//
// The spherical-harmonic synthesis, the geodetic/geocentric conversion on
// the WGS 84 ellipsoid, the reference radius 6371.2 km and the conventions
// (X north, Y east, Z down, declination positive east, rates per year) are
// package wmm's: each five-year interval is one [wmm.Model] whose secular
// variation is the interval's slope.
//
// A [Model] is immutable and safe for concurrent use.
package igrf

import (
	"bufio"
	"bytes"
	_ "embed"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"sync"

	"corvane/internal/wmm"
)

//go:embed IGRF14.SHC
var igrf14 []byte

// Name is the model name used in sources and messages.
const Name = "IGRF-14"

// Model is a parsed IGRF coefficient file.
type Model struct {
	Name     string
	From, To float64 // first and last epoch, decimal years
	MaxDeg   int
	epochs   []float64
	spans    []*wmm.Model // spans[i] covers epochs[i]..epochs[i+1]
}

var (
	once sync.Once
	def  *Model
)

// Default returns the embedded IGRF-14. It panics only if the embedded file
// is corrupt, which the package tests rule out.
func Default() *Model {
	once.Do(func() {
		m, err := Parse(bytes.NewReader(igrf14), Name)
		if err != nil {
			panic("igrf: embedded coefficient file: " + err.Error())
		}
		def = m
	})
	return def
}

// Parse reads a coefficient file in the SHC layout: lines starting with '#'
// are comments; the first other line is "nmin nmax nepochs order step
// first last"; the next lists the epochs; then one line per coefficient,
// "n m value-per-epoch...", g_n^m first and, for m > 0, h_n^m on the next
// line with the same n and m (or with order -m). Only spline order 2
// (linear in time) is understood. Errors name the line and field.
func Parse(r io.Reader, name string) (*Model, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64*1024), 1<<20)
	line := 0
	var hdr []string
	var epochs []float64
	var nmax, nep int
	type key struct{ n, m int }
	vals := map[key][]float64{} // g for m >= 0, h stored under -m
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		f := strings.Fields(text)
		switch {
		case hdr == nil:
			if len(f) != 7 {
				return nil, fmt.Errorf("igrf: line %d: header wants 7 fields (nmin nmax nepochs order step first last), got %d", line, len(f))
			}
			hdr = f
			var err error
			if nmax, err = strconv.Atoi(f[1]); err != nil || nmax < 1 || nmax > 100 {
				return nil, fmt.Errorf("igrf: line %d, field 2 (nmax): %q is not a degree in 1..100", line, f[1])
			}
			if nep, err = strconv.Atoi(f[2]); err != nil || nep < 2 {
				return nil, fmt.Errorf("igrf: line %d, field 3 (number of epochs): %q is not a number of at least 2", line, f[2])
			}
			if f[3] != "2" {
				return nil, fmt.Errorf("igrf: line %d, field 4 (spline order): %q; only order 2 (linear in time) is understood", line, f[3])
			}
			continue
		case epochs == nil:
			if len(f) != nep {
				return nil, fmt.Errorf("igrf: line %d: want %d epochs, got %d", line, nep, len(f))
			}
			for i, s := range f {
				v, err := strconv.ParseFloat(s, 64)
				if err != nil || math.IsNaN(v) || (i > 0 && v <= epochs[i-1]) {
					return nil, fmt.Errorf("igrf: line %d, field %d (epoch): %q is not a year after the previous epoch", line, i+1, s)
				}
				epochs = append(epochs, v)
			}
			continue
		}
		if len(f) != nep+2 {
			return nil, fmt.Errorf("igrf: line %d: want %d fields (n m and %d epochs), got %d", line, nep+2, nep, len(f))
		}
		n, err := strconv.Atoi(f[0])
		if err != nil || n < 1 || n > nmax {
			return nil, fmt.Errorf("igrf: line %d, field 1 (n): %q is not a degree in 1..%d", line, f[0], nmax)
		}
		m, err := strconv.Atoi(f[1])
		if err != nil || m < -n || m > n {
			return nil, fmt.Errorf("igrf: line %d, field 2 (m): %q is not an order in -%d..%d", line, f[1], n, n)
		}
		k := key{n, m}
		if _, seen := vals[k]; seen && m > 0 {
			k.m = -m // the second line of a pair is h
		}
		if _, seen := vals[k]; seen {
			return nil, fmt.Errorf("igrf: line %d: coefficient n=%d m=%s appears too often", line, n, f[1])
		}
		row := make([]float64, nep)
		for i := range row {
			v, err := strconv.ParseFloat(f[2+i], 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("igrf: line %d, field %d: %q is not a number", line, 3+i, f[2+i])
			}
			row[i] = v
		}
		vals[k] = row
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("igrf: reading coefficients: %w", err)
	}
	if epochs == nil {
		return nil, fmt.Errorf("igrf: no header and epoch lines found")
	}
	size := wmm.Index(nmax, nmax) + 1
	for n := 1; n <= nmax; n++ {
		for m := -n; m <= n; m++ {
			if _, ok := vals[key{n, m}]; !ok {
				what := "g"
				if m < 0 {
					what = "h"
				}
				return nil, fmt.Errorf("igrf: coefficient %s n=%d m=%d is missing", what, n, abs(m))
			}
		}
	}
	mod := &Model{Name: name, From: epochs[0], To: epochs[nep-1], MaxDeg: nmax, epochs: epochs}
	for i := 0; i+1 < nep; i++ {
		g, h, gd, hd := make([]float64, size), make([]float64, size), make([]float64, size), make([]float64, size)
		span := epochs[i+1] - epochs[i]
		for n := 1; n <= nmax; n++ {
			for m := 0; m <= n; m++ {
				k := wmm.Index(n, m)
				gv := vals[key{n, m}]
				g[k], gd[k] = gv[i], (gv[i+1]-gv[i])/span
				if m > 0 {
					hv := vals[key{n, -m}]
					h[k], hd[k] = hv[i], (hv[i+1]-hv[i])/span
				}
			}
		}
		wm, err := wmm.New(fmt.Sprintf("%s %.1f-%.1f", name, epochs[i], epochs[i+1]), epochs[i], nmax, g, h, gd, hd)
		if err != nil {
			return nil, fmt.Errorf("igrf: %w", err)
		}
		mod.spans = append(mod.spans, wm)
	}
	return mod, nil
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// RangeError reports a date outside the model's years.
type RangeError = wmm.RangeError

// span returns the interval model that covers year, or a *RangeError.
func (m *Model) span(year float64) (*wmm.Model, error) {
	if math.IsNaN(year) || year < m.From || year > m.To {
		return nil, &RangeError{Year: year, From: m.From, To: m.To, Model: m.Name}
	}
	i := len(m.epochs) - 2
	for j := 0; j+1 < len(m.epochs); j++ {
		if year < m.epochs[j+1] {
			i = j
			break
		}
	}
	return m.spans[i], nil
}

// At evaluates the field at WGS 84 geodetic latitude lat and longitude lon
// (degrees), height hKm above the ellipsoid (km) on decimal year year, in
// the local geodetic frame. The yearly rates are the slopes of the five-year
// interval holding the date (the later interval at an epoch itself). Errors
// as for [wmm.Model.At]; a date outside From..To gives a *RangeError.
func (m *Model) At(lat, lon, hKm, year float64) (wmm.Field, error) {
	s, err := m.span(year)
	if err != nil {
		return wmm.Field{}, err
	}
	return s.At(lat, lon, hKm, year)
}

// AtGeocentric evaluates the field at geocentric latitude latc (degrees;
// 90 - colatitude), longitude lon (degrees) and radius rKm (km), with X, Y,
// Z in the geocentric spherical frame. See [wmm.Model.AtGeocentric].
func (m *Model) AtGeocentric(latc, lon, rKm, year float64) (wmm.Field, error) {
	s, err := m.span(year)
	if err != nil {
		return wmm.Field{}, err
	}
	return s.AtGeocentric(latc, lon, rKm, year)
}
