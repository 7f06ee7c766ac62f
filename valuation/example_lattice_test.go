package valuation_test

import (
	"fmt"

	"grantworth/valuation"
)

// A ten-year employee option, vesting after four years, exercised once the
// share reaches 2.5 times the strike, with 8% of vested holders leaving each
// year: the converged (auto) value and its error estimate.
func ExampleLattice() {
	terms := valuation.Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08}
	market := valuation.Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0, Curve: valuation.FlatCurve(0.04)}
	r, err := valuation.Lattice(terms, market, valuation.LatticeOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("value %.3f, error estimate below 0.005: %v, expected term %.2f years, method %s\n",
		r.Value, r.ErrorEstimate < 0.005, r.ExpectedTermYears, r.Method)
	// Output:
	// value 7.059, error estimate below 0.005: true, expected term 7.57 years, method lattice
}

// The raw 500-step tree of a grant vesting in four yearly tranches, valued
// in one pass: later tranches are worth more (they are held longer).
func ExampleLatticeTranches() {
	terms := valuation.Terms{Strike: 12, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.08}
	market := valuation.Market{Spot: 12, VolAnnual: 0.55, Curve: valuation.FlatCurve(0.04)}
	rs, err := valuation.LatticeTranches(terms, []float64{1, 2, 3, 4}, market, valuation.LatticeOptions{Steps: 500})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, r := range rs {
		fmt.Printf("tranche %d: %.3f (expected term %.2f years, %d steps)\n", i+1, r.Value, r.ExpectedTermYears, r.Steps)
	}
	// Output:
	// tranche 1: 5.867 (expected term 5.66 years, 500 steps)
	// tranche 2: 6.299 (expected term 6.29 years, 500 steps)
	// tranche 3: 6.708 (expected term 6.95 years, 500 steps)
	// tranche 4: 7.072 (expected term 7.58 years, 500 steps)
}
