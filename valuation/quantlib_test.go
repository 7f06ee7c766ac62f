package valuation

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

type qlCall struct {
	Spot, Strike, Years, Rate float64
	DividendYield             float64 `json:"dividend_yield"`
	Vol                       float64
	European                  float64
	AmericanFD                float64 `json:"american_fd"`
	AmericanFDCoarse          float64 `json:"american_fd_coarse"`
	AmericanCRR               float64 `json:"american_crr"`
}

// loadQuantLib reads the golden values made by testdata/quantlib_gen.py with
// QuantLib 1.29 (Debian quantlib-python); the file is committed so the tests
// need no Python.
func loadQuantLib(t *testing.T) []qlCall {
	b, err := os.ReadFile("testdata/quantlib_calls.json")
	if err != nil {
		t.Fatalf("QuantLib golden values missing (run testdata/quantlib_gen.py): %v", err)
	}
	var f struct {
		Version string
		Calls   []qlCall
	}
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatal(err)
	}
	if f.Version != "1.29" || len(f.Calls) < 20 {
		t.Fatalf("QuantLib golden file: version %q, %d calls; want 1.29 and at least 20", f.Version, len(f.Calls))
	}
	return f.Calls
}

// European calls with dividend yield against QuantLib's AnalyticEuropeanEngine:
// auto mode within 1e-5 relative (DESIGN §5, vanilla limits), both with the
// European flag and as an option that vests at expiry.
func TestLatticeQuantLibEuropean(t *testing.T) {
	const tol = 1e-5
	covered, total := 0, 0
	for _, c := range loadQuantLib(t) {
		mk := Market{Spot: c.Spot, VolAnnual: c.Vol, DividendYield: c.DividendYield, Curve: FlatCurve(c.Rate)}
		for _, tm := range []Terms{
			{Strike: c.Strike, YearsToExpiry: c.Years, European: true},
			{Strike: c.Strike, YearsToExpiry: c.Years, YearsToVest: c.Years, ExerciseMultiple: 2, ExitRate: 0.1},
		} {
			got, err := Lattice(tm, mk, LatticeOptions{})
			if err != nil {
				t.Fatal(err)
			}
			e := math.Abs(got.Value - c.European)
			total++
			if e <= got.ErrorEstimate {
				covered++
			}
			t.Logf("%+v european %v: auto %.8f ± %.2g, rel %.2g, covered %v", c, tm.European, got.Value, got.ErrorEstimate, e/c.European, e <= got.ErrorEstimate)
			if rel := e / c.European; rel > tol {
				t.Errorf("%+v european %v: auto %.8f ± %.2g, QuantLib %.8f, rel %.2g, tol %g", c, tm.European, got.Value, got.ErrorEstimate, c.European, rel, tol)
			}
		}
	}
	if float64(covered) < 0.95*float64(total) {
		t.Errorf("error estimate covers the error in %d of %d cases, want 95%%", covered, total)
	}
}

// American calls with dividend yield (rational exercise) against QuantLib's
// FdBlackScholesVanillaEngine on a 4000×4000 grid. Tolerance: the auto
// target AutoTarget (0.05%, DESIGN §5), plus the reference's own
// uncertainty, taken as the larger gap to its 2000×2000 grid and to its
// 5000-step CRR tree; and the error estimate must cover the error. (The
// early-exercise boundary falls anywhere between nodes, so auto mode
// extrapolates only where the levels converge regularly: median error
// 1e-5, largest 1.8e-4 on these 22 calls.)
func TestLatticeQuantLibAmerican(t *testing.T) {
	const tol = AutoTarget
	covered := 0
	calls := loadQuantLib(t)
	for _, c := range calls {
		mk := Market{Spot: c.Spot, VolAnnual: c.Vol, DividendYield: c.DividendYield, Curve: FlatCurve(c.Rate)}
		tm := Terms{Strike: c.Strike, YearsToExpiry: c.Years, Rational: true}
		got, err := Lattice(tm, mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		refErr := math.Max(math.Abs(c.AmericanFD-c.AmericanFDCoarse), math.Abs(c.AmericanFD-c.AmericanCRR))
		e := math.Abs(got.Value - c.AmericanFD)
		if e <= got.ErrorEstimate+refErr {
			covered++
		}
		t.Logf("S %v K %v T %.3f r %v q %v vol %v: auto %.6f ± %.2g, QuantLib FD %.6f (ref spread %.1g), rel %.2g", c.Spot, c.Strike, c.Years, c.Rate, c.DividendYield, c.Vol, got.Value, got.ErrorEstimate, c.AmericanFD, refErr, e/c.AmericanFD)
		if e > tol*c.AmericanFD+refErr {
			t.Errorf("%+v: auto %.8f ± %.2g, QuantLib FD %.8f, rel %.2g, tol %g + reference spread %.2g", c, got.Value, got.ErrorEstimate, c.AmericanFD, e/c.AmericanFD, tol, refErr)
		}
	}
	if float64(covered) < 0.95*float64(len(calls)) {
		t.Errorf("error estimate (plus the reference's spread) covers the error in %d of %d cases, want 95%%", covered, len(calls))
	}
}
