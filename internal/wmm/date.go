package wmm

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
)

// DecimalYear converts the calendar date of t to a decimal year by the WMM
// software's convention: year + (day of year - 1) / (days in that year), with
// 366 days in leap years. The time of day is ignored, and the calendar date is
// the one t has in its own location (a date parsed as "2025-07-02" is
// 2 July whatever the zone). So 1 January is exactly year.0, and 2 July 2025
// (day 183 of 365) is 2025 + 182/365 = 2025.49863.
func DecimalYear(t time.Time) float64 {
	y := t.Year()
	days := 365.0
	if isLeap(y) {
		days = 366
	}
	return float64(y) + float64(t.YearDay()-1)/days
}

func isLeap(y int) bool { return y%4 == 0 && (y%100 != 0 || y%400 == 0) }

// ParseDate reads a date given either as YYYY-MM-DD (turned into a decimal
// year by [DecimalYear]) or as a decimal year such as "2027.5". Surrounding
// spaces are ignored. The year must lie in 1900..2200, so that a day or
// month typed alone is not taken for a year. Errors quote the text.
func ParseDate(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, fmt.Errorf("date is empty: want YYYY-MM-DD or a decimal year such as 2027.5")
	}
	if strings.Count(s, "-") == 2 && !strings.HasPrefix(s, "-") {
		t, err := time.Parse("2006-01-02", s)
		if err != nil {
			return 0, fmt.Errorf("date %q is not a valid YYYY-MM-DD calendar date", s)
		}
		if t.Year() < 1900 || t.Year() > 2200 {
			return 0, fmt.Errorf("date %q is outside the years 1900..2200", s)
		}
		return DecimalYear(t), nil
	}
	y, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(y) || math.IsInf(y, 0) {
		return 0, fmt.Errorf("date %q is neither YYYY-MM-DD nor a decimal year such as 2027.5", s)
	}
	if y < 1900 || y > 2200 {
		return 0, fmt.Errorf("decimal year %q is outside 1900..2200", s)
	}
	return y, nil
}
