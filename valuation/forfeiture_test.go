package valuation

import (
	"math"
	"testing"
)

// The IFRS 2 implementation guidance's cliff example (DESIGN §6): 20% of
// holders expected to leave over a three-year cliff is an annual rate of
// 1 − 0.8^(1/3); the expected cost of an option worth 15 is 15 × 0.8 = 12.
func TestExpectedCost(t *testing.T) {
	rate := 1 - math.Cbrt(0.8)
	if got := SurvivalToVest(rate, 3); math.Abs(got-0.8) > 1e-15 {
		t.Errorf("SurvivalToVest(%v, 3) = %v, want 0.8", rate, got)
	}
	if got := ExpectedCost(15, rate, 3); math.Abs(got-12) > 1e-13 {
		t.Errorf("ExpectedCost(15, %v, 3) = %v, want 12", rate, got)
	}
	for _, c := range []struct{ rate, years float64 }{{0, 4}, {0.1, 0}, {0.1, -1}} {
		if got := SurvivalToVest(c.rate, c.years); got != 1 {
			t.Errorf("SurvivalToVest(%v, %v) = %v, want 1", c.rate, c.years, got)
		}
	}
}
