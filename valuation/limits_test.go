package valuation

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

func TestLimitInAndRange(t *testing.T) {
	for _, c := range []struct {
		l     Limit
		in    []float64
		out   []float64
		words string
	}{
		{Limits.Volatility, []float64{0.01, 0.45, 5}, []float64{0.0099, 5.01, 0, math.NaN(), math.Inf(1)}, "from 0.01 to 5"},
		{Limits.DividendYield, []float64{0, 0.999}, []float64{-1e-9, 1}, "at least 0 and below 1"},
		{Limits.ExerciseMultiple, []float64{0, 1.0001, 100}, []float64{1, 0.5, -1, 100.01}, "0, or above 1 and at most 100"},
		{Limits.SharePrice, []float64{1e-6, 1e12}, []float64{9.9e-7, 1.1e12}, "from 10^-6 to 10^12"},
		{Limits.Rate, []float64{-0.1999, 0.4999}, []float64{-0.2, 0.5}, "above -0.2 and below 0.5"},
	} {
		for _, x := range c.in {
			if !c.l.In(x) {
				t.Errorf("%s: %v refused", c.l.Key, x)
			}
		}
		for _, x := range c.out {
			if c.l.In(x) {
				t.Errorf("%s: %v accepted", c.l.Key, x)
			}
		}
		if got := c.l.Range(); got != c.words {
			t.Errorf("%s: Range() = %q, want %q", c.l.Key, got, c.words)
		}
	}
}

// Feasible says in advance what LatticeTranches does: over random inputs
// inside and beyond the table (raw trees of few and many steps, auto mode,
// extreme volatilities, terms and strikes), it refuses exactly the cases
// the lattice refuses, and every refusal wraps ErrLatticeInput.
func TestFeasibleAgreesWithLattice(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	pick := func(xs ...float64) float64 { return xs[rng.IntN(len(xs))] }
	refused, n := 0, 120
	if testing.Short() {
		n = 40
	}
	for i := 0; i < n; i++ {
		T := pick(0.01, 1, 4, 10, 30)
		tm := Terms{Strike: pick(0, 1, 10, 100, 2e4), YearsToExpiry: T, ExerciseMultiple: pick(0, 1.5, 3),
			ExitRate: pick(0, 0.1, 0.5), Rational: rng.IntN(4) == 0, European: rng.IntN(6) == 0}
		m := Market{Spot: pick(1, 10), VolAnnual: pick(0.005, 0.05, 0.5, 3, 6), DividendYield: pick(0, 0.03, 0.4),
			Curve: FlatCurve(pick(-0.05, 0.04, 0.45))}
		vest := []float64{0, T / 3, T}
		o := LatticeOptions{Steps: int(pick(0, 0, 1, 3, 40, 400, 30000))}
		_, lerr := LatticeTranches(tm, vest, m, o)
		ferr := Feasible(tm, vest, m, o)
		if (lerr == nil) != (ferr == nil) {
			t.Errorf("case %d: terms %+v market spot %v vol %v q %v steps %d: lattice %v, Feasible %v", i, tm, m.Spot, m.VolAnnual, m.DividendYield, o.Steps, lerr, ferr)
		}
		if ferr != nil {
			refused++
			if !errors.Is(ferr, ErrLatticeInput) {
				t.Errorf("case %d: %v does not wrap ErrLatticeInput", i, ferr)
			}
		}
	}
	t.Logf("%d of %d random cases refused by both", refused, n)
	if refused == 0 || refused == n {
		t.Errorf("%d of %d refused: the cases do not reach both sides", refused, n)
	}
}

// Auto mode's value for the case that came out at −4.8e-7 (a strike 10^4
// times the spot at 1% volatility, exits: the strike's correction cancelled
// against the value) is 0 within the negligible, by itself (the lattice
// no longer shows values below 0 as 0).
func TestAutoValueNotNegative(t *testing.T) {
	tm := Terms{Strike: 1.6e4, YearsToExpiry: 10, ExerciseMultiple: 2.2, ExitRate: 0.12}
	m := Market{Spot: 1.6, VolAnnual: 0.01, Curve: FlatCurve(0.04)}
	r, err := Lattice(tm, m, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Value != 0 || r.ErrorEstimate < 0 || r.ErrorEstimate > AutoNegligible*m.Spot {
		t.Errorf("value %v ± %v, want 0 ± at most %v", r.Value, r.ErrorEstimate, AutoNegligible*m.Spot)
	}
}
