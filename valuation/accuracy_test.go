package valuation

import (
	"math"
	"testing"
)

// employeeCases spread the inputs an option ledger meets: short and long
// terms, early and late vesting, multiples near and far, exits, dividends,
// rational exercise, barrier below the spot, an upward-sloping curve.
func employeeCases(t *testing.T) []struct {
	tm Terms
	mk Market
} {
	curve := testCurve(t)
	flat := FlatCurve(0.04)
	return []struct {
		tm Terms
		mk Market
	}{
		{Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08}, Market{Spot: 12, VolAnnual: 0.55, Curve: flat}},
		{Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.1}, Market{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)}},
		{Terms{Strike: 20, YearsToExpiry: 7, YearsToVest: 1.37, ExerciseMultiple: 2, ExitRate: 0.15}, Market{Spot: 18, VolAnnual: 0.4, DividendYield: 0.01, Curve: curve}},
		{Terms{Strike: 30, YearsToExpiry: 5, YearsToVest: 0, ExerciseMultiple: 1.8, ExitRate: 0.05}, Market{Spot: 33, VolAnnual: 0.3, Curve: curve}},
		{Terms{Strike: 8, YearsToExpiry: 10, YearsToVest: 2.25, ExerciseMultiple: 4, ExitRate: 0.2}, Market{Spot: 10, VolAnnual: 0.7, Curve: flat}},
		{Terms{Strike: 10, YearsToExpiry: 6, YearsToVest: 1, ExerciseMultiple: 1.5, ExitRate: 0.0}, Market{Spot: 12, VolAnnual: 0.25, DividendYield: 0.03, Curve: flat}},
		{Terms{Strike: 40, YearsToExpiry: 10, YearsToVest: 4.1, ExitRate: 0.1, Rational: true}, Market{Spot: 40, VolAnnual: 0.3, DividendYield: 0.04, Curve: flat}},
		{Terms{Strike: 40, YearsToExpiry: 8, YearsToVest: 2, ExerciseMultiple: 2.2, ExitRate: 0.06, Rational: true}, Market{Spot: 45, VolAnnual: 0.35, DividendYield: 0.05, Curve: curve}},
		{Terms{Strike: 5, YearsToExpiry: 10, YearsToVest: 0.5, ExerciseMultiple: 1.3, ExitRate: 0.1}, Market{Spot: 6, VolAnnual: 0.5, Curve: flat}}, // barrier just above the spot
		{Terms{Strike: 5, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 1.5, ExitRate: 0.1}, Market{Spot: 9, VolAnnual: 0.5, Curve: flat}},   // barrier below the spot
		{Terms{Strike: 15, YearsToExpiry: 3, YearsToVest: 1, ExerciseMultiple: 2, ExitRate: 0.3}, Market{Spot: 14, VolAnnual: 0.6, Curve: flat}},
		{Terms{Strike: 25, YearsToExpiry: 10, YearsToVest: 3.9, ExerciseMultiple: 2.8, ExitRate: 0.12}, Market{Spot: 22, VolAnnual: 0.45, DividendYield: 0.015, Curve: curve}},
	}
}

// Auto mode against the Crank-Nicolson reference (fdEmployee, Richardson
// over two grids): within 0.05% (DESIGN §5), and the error estimate covers
// the actual error.
func TestLatticeAutoEmployeeAccuracy(t *testing.T) {
	const tol = 5e-4
	covered, total := 0, 0
	for _, c := range employeeCases(t) {
		f1 := fdEmployee(c.tm, c.mk, 200, 100)
		f2 := fdEmployee(c.tm, c.mk, 400, 200)
		ref := f2 + (f2-f1)/3
		got, err := Lattice(c.tm, c.mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		e := math.Abs(got.Value - ref)
		total++
		if e <= got.ErrorEstimate {
			covered++
		}
		t.Logf("terms %+v spot %v vol %v q %v: auto %.6f ± %.2g (steps %d), FD %.6f (grids %.6f %.6f), rel err %.2g", c.tm, c.mk.Spot, c.mk.VolAnnual, c.mk.DividendYield, got.Value, got.ErrorEstimate, got.Steps, ref, f1, f2, e/ref)
		if e > tol*ref {
			t.Errorf("terms %+v market %+v: auto %.6f ± %.2g, FD reference %.6f, rel err %.2g, tol %g", c.tm, c.mk, got.Value, got.ErrorEstimate, ref, e/ref, tol)
		}
	}
	if float64(covered) < 0.95*float64(total) {
		t.Errorf("error estimate covers the error in %d of %d cases, want at least 95%%", covered, total)
	}
}
