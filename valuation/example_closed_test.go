package valuation_test

import (
	"fmt"

	"grantworth/valuation"
)

// Hull's worked example (from memory): a six-month call and put.
func ExampleBSMCall() {
	in := valuation.BSMInputs{Spot: 42, Strike: 40, Years: 0.5, Rate: 0.10, Vol: 0.20}
	fmt.Printf("call %.2f, put %.2f\n", valuation.BSMCall(in), valuation.BSMPut(in))
	vol, _ := valuation.ImpliedVol(valuation.BSMCall(in), in, true)
	fmt.Printf("implied volatility %.4f\n", vol)
	// Output:
	// call 4.76, put 0.81
	// implied volatility 0.2000
}

// A flat 5% semiannual par curve is the continuous zero rate 2·ln(1.025).
func ExampleBootstrapPar() {
	curve, err := valuation.BootstrapPar([]float64{0.5, 2, 10}, []float64{0.05, 0.05, 0.05})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("zero at 7 years %.4f%%, 10-year par bond prices %.10f\n",
		100*curve.Zero(7), valuation.ParBondPrice(curve, 10, 0.05))
	// Output:
	// zero at 7 years 4.9385%, 10-year par bond prices 1.0000000000
}

// Warrants of a new issue: Hull's example (from memory), 7.04/1.2 = 5.87.
func ExampleEuropeanWarrant() {
	terms := valuation.Terms{Strike: 60, YearsToExpiry: 5, European: true}
	mkt := valuation.Market{Spot: 40, VolAnnual: 0.30, Curve: valuation.FlatCurve(0.03)}
	d := valuation.Dilution{SharesOutstanding: 1_000_000, Warrants: 200_000}
	r, _ := valuation.EuropeanWarrant(terms, mkt, d)
	fmt.Printf("warrant %.2f\n", r.Value)
	// Output: warrant 5.87
}

// The Monte Carlo cross-check of an employee option, seeded.
func ExampleMonteCarlo() {
	terms := valuation.Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08}
	mkt := valuation.Market{Spot: 12, VolAnnual: 0.55, Curve: valuation.FlatCurve(0.04)}
	r, _ := valuation.MonteCarlo(terms, mkt, valuation.MCOptions{Paths: 20000, StepsPerYear: 24, Seed: 1})
	fmt.Printf("%.2f ± %.2f, expected term %.1f years\n", r.Value, r.ErrorEstimate, r.ExpectedTermYears)
	// Output: 7.06 ± 0.01, expected term 7.6 years
}
