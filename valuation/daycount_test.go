package valuation

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"
)

// Days counts the actual days of ACT/365F (common practice) between the
// calendar days of two times, each in its own location. For two UTC times
// it counts from their seconds; that must agree with counting from the
// calendar (time.Date at midnight, as Days was first written) before and
// after 1970, at any hour, and where the calendar count saturates (about
// 292 years apart, a time.Duration's range).
func TestDaysFromSecondsAsFromCalendar(t *testing.T) {
	byCalendar := func(a, b time.Time) int {
		da := time.Date(a.Year(), a.Month(), a.Day(), 0, 0, 0, 0, time.UTC)
		db := time.Date(b.Year(), b.Month(), b.Day(), 0, 0, 0, 0, time.UTC)
		return int(db.Sub(da) / (24 * time.Hour))
	}
	east, west := time.FixedZone("UTC+9", 9*3600), time.FixedZone("UTC-5", -5*3600)
	rng := rand.New(rand.NewPCG(7, 8))
	at := func(loc *time.Location) time.Time {
		return time.Date(1700+rng.IntN(700), time.Month(1+rng.IntN(12)), 1+rng.IntN(31), rng.IntN(24), rng.IntN(60), rng.IntN(60), rng.IntN(1e9), loc)
	}
	for range 200_000 {
		a, b := at(time.UTC), at(time.UTC)
		if rng.IntN(2) == 0 { // near each other, as a grant's dates are
			b = a.Add(time.Duration(rng.IntN(20*365*24)-5*365*24) * time.Hour)
		}
		if got, want := Days(a, b), byCalendar(a, b); got != want {
			t.Fatalf("Days(%v, %v) = %d, want %d", a, b, got, want)
		}
	}
	for _, c := range [][2]time.Time{
		{time.Date(1969, 12, 31, 23, 59, 59, 0, time.UTC), time.Date(1970, 1, 1, 0, 0, 0, 0, time.UTC)},
		{time.Date(2026, 1, 1, 23, 0, 0, 0, east), time.Date(2026, 1, 2, 1, 0, 0, 0, time.UTC)},
		{time.Date(2026, 1, 1, 23, 0, 0, 0, west), time.Date(2026, 1, 1, 1, 0, 0, 0, time.UTC)},
		{time.Date(1700, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(2100, 1, 1, 0, 0, 0, 0, time.UTC)},
		{time.Date(2100, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(1700, 1, 1, 0, 0, 0, 0, time.UTC)},
		{{}, time.Date(2026, 9, 30, 0, 0, 0, 0, time.UTC)},
	} {
		if got, want := Days(c[0], c[1]), byCalendar(c[0], c[1]); got != want {
			t.Errorf("Days(%v, %v) = %d, want %d", c[0], c[1], got, want)
		}
	}
}

// The auto lattice's knots are the distinct vest times in order, each
// with the tranches that vest then (in their order among the tranches),
// and the expiry last with none.
func TestGeometryKnots(t *testing.T) {
	c, err := NewCurve([]CurvePoint{{Tenor: 1, Rate: 0.04}})
	if err != nil {
		t.Fatal(err)
	}
	am := newAutoModel(Terms{Strike: 1, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.1}, Market{Spot: 1, VolAnnual: 0.5, Curve: c}, Convention{})
	g := am.geometry([]float64{2, 1, 2, 3, 1, 2})
	if want := []float64{1, 2, 3, 10}; fmt.Sprint(g.knots) != fmt.Sprint(want) {
		t.Errorf("knots %v, want %v", g.knots, want)
	}
	if want := [][]int{{1, 4}, {0, 2, 5}, {3}, nil}; fmt.Sprint(g.at) != fmt.Sprint(want) {
		t.Errorf("tranches at the knots %v, want %v", g.at, want)
	}
	if len(g.base) != 3 {
		t.Errorf("%d intervals' base steps, want 3", len(g.base))
	}
}

// DayNumber counts the calendar day of a time in its own location, before
// 1970 too, as time.Date at midnight UTC does.
func TestDayNumber(t *testing.T) {
	east := time.FixedZone("UTC+9", 9*3600)
	for _, tm := range []time.Time{
		time.Date(1970, 1, 1, 0, 0, 0, 0, time.UTC), time.Date(1969, 12, 31, 23, 59, 59, 999, time.UTC),
		time.Date(1969, 12, 31, 0, 0, 0, 0, time.UTC), time.Date(1900, 3, 1, 12, 0, 0, 0, time.UTC),
		time.Date(2026, 9, 30, 0, 0, 0, 0, time.UTC), time.Date(2026, 9, 30, 23, 0, 0, 0, time.UTC),
		time.Date(2026, 9, 30, 1, 0, 0, 0, east), time.Date(1, 1, 1, 0, 0, 0, 0, time.UTC), {},
	} {
		want := time.Date(tm.Year(), tm.Month(), tm.Day(), 0, 0, 0, 0, time.UTC).Unix() / 86400
		if got := DayNumber(tm); got != want {
			t.Errorf("DayNumber(%v) = %d, want %d", tm, got, want)
		}
	}
}
