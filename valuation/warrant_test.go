package valuation

import (
	"math"
	"testing"
)

// Hull, Options, Futures, and Other Derivatives, the warrants example (from
// memory; DESIGN §6): 1,000,000 shares at 40, a new issue of 200,000
// warrants, strike 60, 5 years, r = 0.03, σ = 0.30, no dividends: call
// 7.04, warrant 7.04/1.2 = 5.87.
func TestWarrantHullNewIssue(t *testing.T) {
	const tol = 0.005 // published to 2 decimals
	terms := Terms{Strike: 60, YearsToExpiry: 5, European: true}
	mkt := Market{Spot: 40, VolAnnual: 0.30, Curve: FlatCurve(0.03)}
	call, err := BlackScholes(terms, mkt)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(call.Value-7.04) > tol {
		t.Errorf("Hull warrant example call: got %.5f, want 7.04, tol %g", call.Value, tol)
	}
	r, err := EuropeanWarrant(terms, mkt, Dilution{SharesOutstanding: 1e6, Warrants: 2e5})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.Value-5.87) > tol {
		t.Errorf("Hull warrant example: got %.5f, want 5.87, tol %g", r.Value, tol)
	}
	if math.Abs(r.Value-call.Value/1.2) > 1e-12 {
		t.Errorf("new-issue warrant %v is not call/1.2 = %v", r.Value, call.Value/1.2)
	}
}

// Galai-Schneller: the solved w satisfies its fixed point, exceeds the
// new-issue value (the call is taken on a larger equity per share) and
// falls back to it as the warrant count goes to 0.
func TestWarrantGalaiSchneller(t *testing.T) {
	const tol = 1e-10 // fixed-point residual relative to the spot
	terms := Terms{Strike: 60, YearsToExpiry: 5, European: true}
	mkt := Market{Spot: 40, VolAnnual: 0.30, Curve: FlatCurve(0.03)}
	for _, w := range []float64{1, 1e4, 2e5, 1e6, 5e6} {
		d := Dilution{SharesOutstanding: 1e6, Warrants: w, PriceReflectsWarrants: true}
		gs, err := EuropeanWarrant(terms, mkt, d)
		if err != nil {
			t.Fatal(err)
		}
		shifted := mkt
		shifted.Spot = 40 + w/1e6*gs.Value
		c, _ := BlackScholes(terms, shifted)
		if res := gs.Value - d.Factor()*c.Value; math.Abs(res) > tol*40 {
			t.Errorf("W=%v: fixed point residual %g (w %v)", w, res, gs.Value)
		}
		d.PriceReflectsWarrants = false
		plain, _ := EuropeanWarrant(terms, mkt, d)
		if !(gs.Value > plain.Value) {
			t.Errorf("W=%v: Galai-Schneller %v not above new-issue value %v", w, gs.Value, plain.Value)
		}
		if w == 1 && math.Abs(gs.Value-plain.Value) > 1e-5 {
			t.Errorf("W=1: Galai-Schneller %v far from new-issue value %v", gs.Value, plain.Value)
		}
	}
}

func TestDilutionCheck(t *testing.T) {
	for _, d := range []Dilution{{0, 1, false}, {-5, 1, true}, {10, -1, false}, {math.Inf(1), 1, false}, {10, math.NaN(), true}} {
		if _, _, err := DilutedValue(d, 10, func(float64) (float64, error) { return 1, nil }); err == nil {
			t.Errorf("DilutedValue with %+v gave no error", d)
		}
	}
}

// American warrants on the lattice: on a share paying no dividends early
// exercise is never optimal (Merton 1973), so the American warrant equals
// the European one; with dividends it is worth at least as much; and with
// the price reflecting the warrants the Galai-Schneller fixed point holds
// with the lattice value as the call.
func TestWarrantAmerican(t *testing.T) {
	terms := Terms{Strike: 60, YearsToExpiry: 5}
	mkt := Market{Spot: 40, VolAnnual: 0.30, Curve: FlatCurve(0.03)}
	for _, reflects := range []bool{false, true} {
		d := Dilution{SharesOutstanding: 1e6, Warrants: 2e5, PriceReflectsWarrants: reflects}
		am, err := WarrantValue(terms, mkt, d, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		eu, err := EuropeanWarrant(terms, mkt, d)
		if err != nil {
			t.Fatal(err)
		}
		tol := 3*am.ErrorEstimate + 1e-5*eu.Value // lattice error estimate; the 1e-5 vanilla target of DESIGN §5
		if math.Abs(am.Value-eu.Value) > tol || am.Method != MethodLattice {
			t.Errorf("reflects=%v: American warrant %.7f ± %.2g, European %.7f, tol %.2g", reflects, am.Value, am.ErrorEstimate, eu.Value, tol)
		}
	}
	mkt.DividendYield = 0.06
	terms.Strike = 30
	d := Dilution{SharesOutstanding: 1e6, Warrants: 2e5, PriceReflectsWarrants: true}
	am, err := WarrantValue(terms, mkt, d, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	eu, _ := EuropeanWarrant(terms, mkt, d)
	if !(am.Value > eu.Value) {
		t.Errorf("with dividends: American warrant %v not above European %v", am.Value, eu.Value)
	}
	shifted := mkt
	shifted.Spot = 40 + 0.2*am.Value
	rational := terms
	rational.Rational = true
	c, err := Lattice(rational, shifted, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if res := am.Value - d.Factor()*c.Value; math.Abs(res) > 1e-9*40 {
		t.Errorf("American Galai-Schneller residual %g", res)
	}
}

// A zero-strike (pre-funded) warrant, an identity: with no dividends the
// call is the share itself, so a new issue is worth N/(N+W)·S0, and when the
// share price already reflects the warrants the fixed point
// w = N/(N+W)·(S0 + (W/N)·w) gives w = S0 exactly: one warrant, one share.
func TestWarrantZeroStrike(t *testing.T) {
	const tol = 1e-9
	mkt := Market{Spot: 4, VolAnnual: 0.5, Curve: FlatCurve(0.04)}
	d := Dilution{SharesOutstanding: 9e6, Warrants: 1e6}
	for _, european := range []bool{true, false} {
		terms := Terms{Strike: 0, YearsToExpiry: 7, European: european}
		plain, err := WarrantValue(terms, mkt, d, LatticeOptions{})
		if err != nil {
			t.Fatalf("european=%v new issue: %v", european, err)
		}
		if want := 0.9 * 4; math.Abs(plain.Value-want) > tol*want {
			t.Errorf("european=%v new issue: got %v, want N/(N+W)·S0 = %v", european, plain.Value, want)
		}
		gs := d
		gs.PriceReflectsWarrants = true
		r, err := WarrantValue(terms, mkt, gs, LatticeOptions{})
		if err != nil {
			t.Fatalf("european=%v Galai-Schneller: %v", european, err)
		}
		if math.Abs(r.Value-4) > 1e-6 {
			t.Errorf("european=%v Galai-Schneller: got %v, want S0 = 4", european, r.Value)
		}
	}
}
