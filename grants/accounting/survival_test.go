package accounting

import (
	"math"
	"testing"
	"time"

	"grantworth/valuation"
)

// The cache of survivals gives exactly what valuation.SurvivalToVest
// gives, bit for bit, for every whole number of days, whatever the order
// of the rates asked for (three rates take turns in two tables), up to and
// past its largest table.
func TestSurvivalsAreSurvivalToVest(t *testing.T) {
	var sv survivals
	rates := []float64{0.08, 0.1, 0.08, 0.25, 0.1, 0, 0.999}
	for _, days := range []int{-3, 0, 1, 2, 364, 365, 366, 1461, 600, 3, 5000, maxCachedDays - 1, maxCachedDays, maxCachedDays + 10} {
		for _, r := range rates {
			want := valuation.SurvivalToVest(r, float64(days)/365)
			for range 2 { // computed, then from the table
				if got := sv.at(r, days); math.Float64bits(got) != math.Float64bits(want) {
					t.Fatalf("rate %v, %d days: %v, SurvivalToVest gives %v", r, days, got, want)
				}
			}
		}
	}
}

// dayNum numbers calendar days as the civil calendar of time.Date does,
// for instants in UTC (its quick path), at any time of day, before and
// after 1970, and in other zones (the civil day there).
func TestDayNum(t *testing.T) {
	east, west := time.FixedZone("east", 5*3600+1800), time.FixedZone("west", -11*3600)
	slow := func(t time.Time) int {
		return int(time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC).Unix() / 86400)
	}
	for _, base := range []time.Time{time.Date(1969, 12, 30, 0, 0, 0, 0, time.UTC), time.Date(1900, 2, 27, 0, 0, 0, 0, time.UTC),
		time.Date(2024, 2, 28, 0, 0, 0, 0, time.UTC), time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC)} {
		for h := -50; h <= 50; h++ {
			for _, loc := range []*time.Location{time.UTC, east, west} {
				d := base.Add(time.Duration(h)*time.Hour + 59*time.Minute + 59*time.Second).In(loc)
				if got, want := dayNum(d), slow(d); got != want {
					t.Fatalf("%v: day %d, want %d", d, got, want)
				}
			}
		}
	}
	if n := dayNum(time.Date(1970, 1, 2, 23, 59, 0, 0, time.UTC)); n != 1 {
		t.Errorf("1970-01-02: day %d, want 1", n)
	}
	if n := dayNum(time.Date(1969, 12, 31, 0, 0, 1, 0, time.UTC)); n != -1 {
		t.Errorf("1969-12-31: day %d, want -1", n)
	}
}
