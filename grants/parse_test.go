package grants

import (
	"errors"
	"math"
	"testing"
	"time"
)

func TestParseDate(t *testing.T) {
	for _, c := range []struct {
		in   string
		want string // "" = error
		err  error
	}{
		{"2026-09-30", "2026-09-30", nil},
		{" 2026-09-30 ", "2026-09-30", nil},
		{"2026-09-30T00:00:00", "2026-09-30", nil},
		{"2026-09-30 00:00:00", "2026-09-30", nil},
		{"2026-09-30T00:00:00Z", "2026-09-30", nil},
		// Excel serials (1900 date system). Expected dates computed with
		// Python's datetime as date(1899, 12, 30) + timedelta(n) for n >= 61
		// and date(1899, 12, 31) + timedelta(n) below (common practice:
		// spreadsheets count a 29 February 1900 that never was, day 60).
		{"45200", "2023-10-01", nil},
		{"46295", "2026-09-30", nil},
		{"45200.75", "2023-10-01", nil},
		{"1", "1900-01-01", nil},
		{"59", "1900-02-28", nil},
		{"61", "1900-03-01", nil},
		{"60", "", ErrNotDate},
		{"0", "", ErrNotDate},
		{"03/04/2025", "", ErrAmbiguousDate},
		{"3.4.2025", "", ErrAmbiguousDate},
		{"2025/03/04", "", ErrAmbiguousDate},
		{"04-03-2025", "", ErrAmbiguousDate},
		{"2023-13-01", "", ErrNotDate},
		{"2023-02-30", "", ErrNotDate},
		{"March 4, 2025", "", ErrNotDate},
		{"soon", "", ErrNotDate},
		{"", "", ErrRequired},
		{"1850-01-01", "", ErrRange},
		{"2026-09-30X", "", ErrNotDate},
		{"9999999", "", ErrRange},
	} {
		got, err := ParseDate(c.in)
		if c.want == "" {
			if !errors.Is(err, c.err) {
				t.Errorf("ParseDate(%q) = %v, %v; want error %v", c.in, got, err, c.err)
			}
			continue
		}
		if err != nil || got.Format(time.DateOnly) != c.want {
			t.Errorf("ParseDate(%q) = %v, %v; want %s", c.in, got, err, c.want)
		}
	}
}

func TestParseDate1904(t *testing.T) {
	// In the 1904 date system day 0 is 1904-01-01 (common practice;
	// Python: date(1904, 1, 1) + timedelta(1) = 1904-01-02).
	got, err := parseDate("1", true)
	if err != nil || !got.Equal(d("1904-01-02")) {
		t.Errorf("1904 serial 1 = %v, %v; want 1904-01-02", got, err)
	}
}

func TestParseNumber(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"1234.5", 1234.5, true},
		{"-3", -3, true},
		{"+3", 3, true},
		{"1e6", 1e6, true},
		{"1,234,567.89", 1234567.89, true},
		{"-1,000", -1000, true},
		{" 12 ", 12, true},
		{"1,5", 0, false},
		{"12,34", 0, false},
		{"1,2345", 0, false},
		{",123", 0, false},
		{"1,234.5,6", 0, false},
		{"NaN", 0, false},
		{"Inf", 0, false},
		{"0x10", 0, false},
		{"1_000", 0, false},
		{"$5", 0, false},
		{"1e999", 0, false},
		{"abc", 0, false},
		{"", 0, false},
		{"1 000", 0, false},
	} {
		got, err := ParseNumber(c.in)
		if c.ok != (err == nil) || c.ok && got != c.want {
			t.Errorf("ParseNumber(%q) = %v, %v; want %v ok=%v", c.in, got, err, c.want, c.ok)
		}
	}
	if _, err := ParseInt("1000.5"); !errors.Is(err, ErrNotInteger) {
		t.Errorf("ParseInt(1000.5) err %v", err)
	}
	if n, err := ParseInt("1,000.0"); err != nil || n != 1000 {
		t.Errorf("ParseInt(1,000.0) = %v, %v", n, err)
	}
}

func TestParsePercent(t *testing.T) {
	const tol = 1e-15 // float rounding of the division by 100
	for _, c := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"0.45", 0.45, true},
		{"45%", 0.45, true},
		{"45 %", 0.45, true},
		{"4.25%", 0.0425, true},
		{"-0.5%", -0.005, true},
		{"45", 45, true}, // read as 4500%; validation flags it
		{"%", 0, false},
		{"45%%", 0, false},
		{"forty", 0, false},
		{"", 0, false},
	} {
		got, err := ParsePercent(c.in)
		if c.ok != (err == nil) || c.ok && math.Abs(got-c.want) > tol {
			t.Errorf("ParsePercent(%q) = %v, %v; want %v ok=%v", c.in, got, err, c.want, c.ok)
		}
	}
}

func TestNorm(t *testing.T) {
	for in, want := range map[string]string{"Grant_ID": "grantid", " grant id ": "grantid", "SHARE PRICES": "shareprices", "share_prices": "shareprices", "\ufeffgrant_id": "grantid"} {
		if got := norm(in); got != want {
			t.Errorf("norm(%q) = %q, want %q", in, got, want)
		}
	}
}

func FuzzParseDate(f *testing.F) {
	for _, s := range []string{"2026-09-30", "45200", "45200.5", "03/04/2025", "", "2026-09-30T10:00:00", "60", "1e5", "2026-9-3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, err := ParseDate(s)
		if err != nil {
			return
		}
		if got.Year() < minYear || got.Year() > maxYear || got.Hour() != 0 || got.Location() != time.UTC {
			t.Fatalf("ParseDate(%q) = %v", s, got)
		}
		// An ISO date reads back as itself.
		if again, err := ParseDate(got.Format(time.DateOnly)); err != nil || !again.Equal(got) {
			t.Fatalf("ParseDate(%q) = %v does not round-trip: %v %v", s, got, again, err)
		}
	})
}

func FuzzParseNumber(f *testing.F) {
	for _, s := range []string{"1234.5", "1,234", "-3", "1e6", "NaN", "0x1p3", "1,5", "+.5", "5."} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := ParseNumber(s)
		if err != nil {
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("ParseNumber(%q) = %v", s, v)
		}
		if n, err := ParseInt(s); err == nil && float64(n) != v {
			t.Fatalf("ParseInt(%q) = %d, ParseNumber %v", s, n, v)
		}
	})
}

func FuzzParsePercent(f *testing.F) {
	for _, s := range []string{"45%", "0.45", "4.5 %", "%", "1,000%", "-2%"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := ParsePercent(s)
		if err != nil {
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("ParsePercent(%q) = %v", s, v)
		}
	})
}
