package grants

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
)

// Dates before minYear or after maxYear are refused: they are almost always
// a number typed into a date column.
const (
	minYear = 1900
	maxYear = 2199
)

// ParseDate reads a date from a cell's raw text: an ISO YYYY-MM-DD date
// (optionally followed by a time, "T00:00:00" or " 00:00:00", which is
// ignored), or an Excel serial day number in the 1900 date system (date
// cells are stored as serials; a fraction, the time of day, is ignored).
// Any other text, such as 03/04/2025, is refused as ambiguous.
func ParseDate(s string) (time.Time, error) {
	return parseDate(s, false)
}

func parseDate(s string, date1904 bool) (time.Time, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return time.Time{}, ErrRequired
	}
	if isSerial(s) {
		f, err := strconv.ParseFloat(s, 64)
		if err != nil {
			return time.Time{}, ErrNotDate
		}
		return serialDate(f, date1904)
	}
	if len(s) >= 10 && s[4] == '-' && s[7] == '-' {
		rest := s[10:]
		if rest != "" && !(rest[0] == 'T' || rest[0] == ' ') {
			return time.Time{}, ErrNotDate
		}
		if rest != "" {
			if _, err := time.Parse("15:04:05", strings.TrimSuffix(rest[1:], "Z")); err != nil {
				if _, err := time.Parse("15:04", rest[1:]); err != nil {
					return time.Time{}, ErrNotDate
				}
			}
		}
		t, err := time.Parse("2006-01-02", s[:10])
		if err != nil {
			return time.Time{}, ErrNotDate
		}
		if t.Year() < minYear || t.Year() > maxYear {
			return time.Time{}, ErrRange
		}
		return t, nil
	}
	if strings.ContainsAny(s, "/.-") && strings.ContainsAny(s, "0123456789") {
		return time.Time{}, ErrAmbiguousDate
	}
	return time.Time{}, ErrNotDate
}

// isSerial reports whether s is digits with at most one decimal point.
func isSerial(s string) bool {
	if len(s) > 20 || s[0] == '.' {
		return false
	}
	dots := 0
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c == '.':
			dots++
		case c < '0' || c > '9':
			return false
		}
	}
	return dots <= 1
}

// serialDate converts an Excel serial day number. In the 1900 system day 1
// is 1900-01-01 and day 60 is the 29 February 1900 that never was (the
// spreadsheet convention); from day 61 on, day n is 1899-12-30 + n days.
func serialDate(f float64, date1904 bool) (time.Time, error) {
	if math.IsNaN(f) || math.IsInf(f, 0) || f < 1 {
		return time.Time{}, ErrNotDate
	}
	day := math.Floor(f)
	if day > 2958465 { // 9999-12-31
		return time.Time{}, ErrRange
	}
	var t time.Time
	switch {
	case date1904:
		t = time.Date(1904, 1, 1, 0, 0, 0, 0, time.UTC).AddDate(0, 0, int(day))
	case day == 60:
		return time.Time{}, fmt.Errorf("%w: serial 60 is 29 February 1900, a day that did not exist", ErrNotDate)
	case day < 60:
		t = time.Date(1899, 12, 31, 0, 0, 0, 0, time.UTC).AddDate(0, 0, int(day))
	default:
		t = time.Date(1899, 12, 30, 0, 0, 0, 0, time.UTC).AddDate(0, 0, int(day))
	}
	if t.Year() < minYear || t.Year() > maxYear {
		return time.Time{}, ErrRange
	}
	return t, nil
}

// ParseNumber reads a number from a cell's raw text: plain decimal notation
// with an optional sign, decimal point and exponent ("1234.5", "-3",
// "1e6"). Commas are accepted only as thousands separators in groups of
// three ("1,234,567.89"); anything else with a comma ("1,5", "12,34") is
// refused, because a decimal comma cannot be told apart from a thousands
// separator. Spaces around the number are ignored; currency signs, NaN,
// infinities and hexadecimal are refused.
func ParseNumber(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, ErrRequired
	}
	if strings.IndexByte(s, ',') >= 0 {
		var ok bool
		if s, ok = stripGroups(s); !ok {
			return 0, ErrNotNumber
		}
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E') {
			return 0, ErrNotNumber
		}
	}
	f, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
		return 0, ErrNotNumber
	}
	return f, nil
}

// stripGroups removes thousands separators from s if they are placed every
// three digits before the decimal point.
func stripGroups(s string) (string, bool) {
	sign := ""
	if s[0] == '-' || s[0] == '+' {
		sign, s = s[:1], s[1:]
	}
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	if strings.IndexByte(frac, ',') >= 0 {
		return "", false
	}
	groups := strings.Split(intPart, ",")
	if len(groups[0]) < 1 || len(groups[0]) > 3 {
		return "", false
	}
	for _, g := range groups[1:] {
		if len(g) != 3 {
			return "", false
		}
	}
	for _, g := range groups {
		for i := 0; i < len(g); i++ {
			if g[i] < '0' || g[i] > '9' {
				return "", false
			}
		}
	}
	return sign + strings.Join(groups, "") + frac, true
}

// ParseInt reads a whole number (see ParseNumber; "1,000" and "1000.0" are
// accepted, "1000.5" is not).
func ParseInt(s string) (int64, error) {
	f, err := ParseNumber(s)
	if err != nil {
		return 0, err
	}
	if f != math.Trunc(f) {
		return 0, ErrNotInteger
	}
	if math.Abs(f) > 1<<53 {
		return 0, ErrRange
	}
	return int64(f), nil
}

// ParsePercent reads a rate given as a decimal (0.45) or as a percentage
// with a percent sign ("45%", "45 %"). A cell formatted as a percentage
// stores the decimal, so it reads as the decimal.
func ParsePercent(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, ErrRequired
	}
	if strings.HasSuffix(s, "%") {
		f, err := ParseNumber(strings.TrimSpace(strings.TrimSuffix(s, "%")))
		if err != nil {
			return 0, ErrNotPercent
		}
		return f / 100, nil
	}
	f, err := ParseNumber(s)
	if err != nil {
		return 0, ErrNotPercent
	}
	return f, nil
}

// norm is the matching form of a sheet name, header or key: lower case,
// with spaces and underscores removed.
func norm(s string) string {
	s = strings.TrimPrefix(s, "\ufeff")
	var b strings.Builder
	for _, r := range strings.ToLower(strings.TrimSpace(s)) {
		if r == ' ' || r == '_' || r == '\t' || r == '\u00a0' {
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// AddMonths adds n months to t; a day the target month does not have
// becomes its last day (31 January + 1 month = 28 or 29 February).
func AddMonths(t time.Time, n int) time.Time {
	y, m, d := t.Date()
	// The month n months on, as time.Date would normalize it.
	k := y*12 + int(m) - 1 + n
	ny := k / 12
	if k%12 < 0 {
		ny-- // floor
	}
	nm := time.Month(k - 12*ny + 1)
	if last := daysIn(ny, nm); d > last {
		d = last
	}
	return time.Date(ny, nm, d, 0, 0, 0, 0, time.UTC)
}

// daysIn is the number of days of month m of year y (proleptic
// Gregorian, as package time counts).
func daysIn(y int, m time.Month) int {
	switch m {
	case time.February:
		if y%4 == 0 && (y%100 != 0 || y%400 == 0) {
			return 29
		}
		return 28
	case time.April, time.June, time.September, time.November:
		return 30
	}
	return 31
}
