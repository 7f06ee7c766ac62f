package valuation

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// exitCall is the value of a vested call with no exercise multiple and no
// rational exercise whose holder leaves at the constant intensity
// λ = −ln(1 − e), exercising if in the money. The exits are independent of
// the share, so the value is the European call averaged over the time of
// leaving:
//
//	C_λ = ∫_0^T λe^(−λt)·C(t) dt + e^(−λT)·C(T),
//
// C(t) the Black-Scholes-Merton call expiring at t (Merton 1973) on a flat
// rate r. With e = 0 it is the Black-Scholes-Merton call itself (the limit
// of DESIGN §6: no multiple, no exits, no dividends). The integral is taken
// in u = √t, where C(t) ~ √t near 0 becomes smooth, by 200-point
// Gauss-Legendre (gonum's quad.Fixed).
func exitCall(S, K, T, r, q, sig, e float64) float64 {
	call := func(t float64) float64 {
		return BSMCall(BSMInputs{Spot: S, Strike: K, Years: t, Rate: r, DividendYield: q, Vol: sig})
	}
	lam := -math.Log1p(-e)
	if lam == 0 {
		return call(T)
	}
	integral := quad.Fixed(func(u float64) float64 {
		t := u * u
		if t == 0 {
			return 0
		}
		return 2 * u * lam * math.Exp(-lam*t) * call(t)
	}, 0, math.Sqrt(T), 200, quad.Legendre{}, 0)
	return integral + math.Exp(-lam*T)*call(T)
}

// The exit-weighted call against a hand check: with e = 0 it is the BSM
// call of Hull's worked example (S=42, K=40, r=0.10, σ=0.20, T=0.5: 4.76,
// from memory), and an exit rate lowers it towards the call's average over
// the exit time.
func TestExitCallReference(t *testing.T) {
	if got := exitCall(42, 40, 0.5, 0.10, 0, 0.2, 0); math.Abs(got-4.76) > 0.005 {
		t.Errorf("exitCall with no exits %.4f, want 4.76 (Hull)", got)
	}
	lo, hi := exitCall(42, 40, 0.5, 0.10, 0, 0.2, 0.5), exitCall(42, 40, 0.5, 0.10, 0, 0.2, 0)
	if !(lo < hi && lo > 2) {
		t.Errorf("exit rate 0.5: %.4f, want below the call %.4f and above the intrinsic value", lo, hi)
	}
}

// farCase is one point of the far out-of-the-money sweep.
type farCase struct {
	moneyness, vol, years, exit float64
}

// farCases cross the strike-to-spot ratios from at the money to 10^12 with
// volatilities of 1% to 80%, terms of a few days to ten years, and no exits
// or 12% a year; every fourth of them when short.
func farCases(short bool) []farCase {
	var cs []farCase
	i := 0
	for _, e := range []float64{0, 0.12} {
		for _, T := range []float64{0.01, 1, 10} {
			for _, vol := range []float64{0.01, 0.1, 0.3, 0.8} {
				for _, km := range []float64{1, 3, 10, 30, 100, 1e3, 1e4, 1e6, 1e12} {
					if !short || i%4 == 0 {
						cs = append(cs, farCase{km, vol, T, e})
					}
					i++
				}
			}
		}
	}
	return cs
}

// Far out of the money, auto mode against the exit-weighted
// Black-Scholes-Merton call (exitCall; with no exits the BSM call, DESIGN
// §6): the value is never negative, within AutoTarget of the reference or
// AutoNegligible of the share price (whichever is larger) without missing
// the target, and the error estimate covers the error. This is the region
// where the value used to be noise (92 ± 150 for a strike 10^12 times a
// share of 1.6, true value about 5e-55: the strike's third-derivative
// correction cancelled against the value) or below 0.
func TestLatticeAutoFarOutOfTheMoney(t *testing.T) {
	const S, r = 1.6, 0.04
	cases := farCases(testing.Short())
	covered := 0
	var rels []float64
	for _, c := range cases {
		K := S * c.moneyness
		ref := exitCall(S, K, c.years, r, 0, c.vol, c.exit)
		tm := Terms{Strike: K, YearsToExpiry: c.years, ExitRate: c.exit}
		rs, err := latticeAuto(tm, []float64{0}, Market{Spot: S, VolAnnual: c.vol, Curve: FlatCurve(r)}, Convention{})
		if err != nil {
			t.Fatalf("%+v: %v", c, err)
		}
		got := rs[0]
		e := math.Abs(got.Value - ref)
		tol := math.Max(AutoTarget*ref, AutoNegligible*S)
		if e <= got.ErrorEstimate {
			covered++
		}
		if ref > AutoNegligible*S {
			rels = append(rels, e/ref)
			if e > AutoTarget*ref {
				t.Logf("strike/spot %g vol %v years %v exit %v: auto %.6g ± %.2g, reference %.6g: within AutoNegligible of the share, not AutoTarget of the value", c.moneyness, c.vol, c.years, c.exit, got.Value, got.ErrorEstimate, ref)
			}
		}
		if got.Value < 0 || e > tol || got.MissedTarget {
			t.Errorf("strike/spot %g vol %v years %v exit %v: auto %.6g ± %.2g (missed target %v, %d steps), reference %.6g, error %.2g, tol %.2g",
				c.moneyness, c.vol, c.years, c.exit, got.Value, got.ErrorEstimate, got.MissedTarget, got.Steps, ref, e, tol)
		}
	}
	sort.Float64s(rels)
	n := len(rels)
	t.Logf("%d cases, %d worth more than AutoNegligible of the share: relative error median %.2g, max %.2g; error estimate covers %d",
		len(cases), n, rels[n/2], rels[n-1], covered)
	if covered < len(cases) {
		t.Errorf("error estimate covers the error in %d of %d cases, want all", covered, len(cases))
	}
}

// The exercise multiple and exits far out of the money, against the
// Crank-Nicolson reference (fdReference: 120 and 240 space steps per unit
// of log price): strikes 3 to 30 times the spot, where the reference's
// grid still holds the strike and the barrier.
func TestLatticeAutoFarOutOfTheMoneyBarrier(t *testing.T) {
	flat := FlatCurve(0.03)
	for _, c := range []struct {
		tm Terms
		mk Market
	}{
		{Terms{Strike: 30, YearsToExpiry: 10, YearsToVest: 1, ExerciseMultiple: 2, ExitRate: 0.1}, Market{Spot: 10, VolAnnual: 0.3, Curve: flat}},
		{Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 0, ExerciseMultiple: 1.5, ExitRate: 0.2}, Market{Spot: 10, VolAnnual: 0.6, DividendYield: 0.02, Curve: flat}},
		{Terms{Strike: 300, YearsToExpiry: 7, YearsToVest: 2, ExerciseMultiple: 3, ExitRate: 0.05}, Market{Spot: 10, VolAnnual: 0.8, Curve: flat}},
		{Terms{Strike: 40, YearsToExpiry: 5, YearsToVest: 7.0 / 365, ExerciseMultiple: 1.2, ExitRate: 0.15}, Market{Spot: 10, VolAnnual: 0.4, Curve: flat}},
	} {
		ref, _ := fdReference(c.tm, c.mk, 120, 60)
		got, err := Lattice(c.tm, c.mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		e := math.Abs(got.Value - ref)
		t.Logf("terms %+v spot %v vol %v: auto %.6g ± %.2g (%d steps), CN %.6g, rel %.2g", c.tm, c.mk.Spot, c.mk.VolAnnual, got.Value, got.ErrorEstimate, got.Steps, ref, e/ref)
		if e > AutoTarget*ref || e > got.ErrorEstimate || got.MissedTarget {
			t.Errorf("terms %+v spot %v vol %v: auto %.6g ± %.2g (missed target %v), CN %.6g, rel %.2g", c.tm, c.mk.Spot, c.mk.VolAnnual, got.Value, got.ErrorEstimate, got.MissedTarget, ref, e/ref)
		}
	}
}

// An award whose share price almost surely never reaches the strike is
// valued at 0 with reachBound as its estimate, without a lattice, and the
// bound is an upper bound: above the BSM call (a holder who never leaves
// and is never made to exercise) and above the award.
func TestLatticeAutoWorthless(t *testing.T) {
	m := Market{Spot: 1.6, VolAnnual: 0.45, Curve: FlatCurve(0.04)}
	tm := Terms{Strike: 1e12, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.1}
	vest := []float64{0, 1, 4}
	rs, err := LatticeTranches(tm, vest, m, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	bsm := BSMCall(BSMInputs{Spot: 1.6, Strike: 1e12, Years: 10, Rate: 0.04, Vol: 0.45})
	for i, r := range rs {
		life := vest[i] + (1-math.Exp(-0.1053605*(10-vest[i])))/0.1053605 // kept until the exit or expiry
		if r.Value != 0 || !(r.ErrorEstimate >= bsm) || r.ErrorEstimate > AutoNegligible*m.Spot || r.MissedTarget ||
			math.Abs(r.ExpectedTermYears-life) > 1e-6 || r.Steps != 0 {
			t.Errorf("vest %v: %+v, want 0 ± a bound between the BSM call %.3g and %.3g, expected term %.6f", vest[i], r, bsm, AutoNegligible*m.Spot, life)
		}
	}
	// The bound against the exit-weighted call where it is not negligible:
	// a strike 30 times the spot at 80% volatility over ten years.
	am := newAutoModel(Terms{Strike: 48, YearsToExpiry: 10}, m, Convention{})
	am.sig = 0.8
	_, nuHi := am.driftRange()
	if b, c := am.reachBound(nuHi), exitCall(1.6, 48, 10, 0.04, 0, 0.8, 0); !(b > c) {
		t.Errorf("reachBound %.4g below the call %.4g it bounds", b, c)
	}
}

// Auto values are never below 0 (a holder may let an award lapse) over
// random inputs across the whole table of limits: strikes from 10^-3 to
// 10^12 times the share price, volatilities of 1% to 500% within what
// auto mode resolves, terms of a day to 100 years, any vesting, multiple,
// exit rate, dividend yield and rational exercise. The lattice itself no
// longer shows a value below 0 as 0; these came out at −4.8e-7 (1%
// volatility, a strike 10^4 times the share) and −2.3e-10 (a term of 0.01
// years) before.
func TestLatticeAutoNeverNegative(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	n := 300
	if testing.Short() {
		n = 60
	}
	logU := func(lo, hi float64) float64 { return math.Exp(math.Log(lo) + rng.Float64()*math.Log(hi/lo)) }
	for i := 0; i < n; i++ {
		T := logU(1.0/365, 100)
		vol := logU(0.01, math.Min(5, 9.9/math.Sqrt(T)))
		S := logU(1e-6, 1e6)
		tm := Terms{Strike: S * logU(1e-3, 1e12), YearsToExpiry: T, ExitRate: 0.5 * rng.Float64(), Rational: rng.IntN(5) == 0}
		if tm.Strike > 1e12 {
			tm.Strike = 1e12
		}
		if rng.IntN(3) > 0 {
			tm.ExerciseMultiple = 1 + logU(0.01, 10)
		}
		vest := []float64{0, T * rng.Float64(), T * rng.Float64()}
		m := Market{Spot: S, VolAnnual: vol, DividendYield: 0.1 * rng.Float64() * float64(rng.IntN(2)), Curve: FlatCurve(0.1*rng.Float64() - 0.02)}
		rs, err := LatticeTranches(tm, vest, m, LatticeOptions{})
		if err != nil {
			continue // beyond what auto mode resolves (the step and node limits): refused, as Feasible says
		}
		for k, r := range rs {
			if !(r.Value >= 0) || !(r.ErrorEstimate >= 0) {
				t.Errorf("terms %+v vest %v spot %v vol %v q %v: %+v", tm, vest[k], S, vol, m.DividendYield, r)
			}
		}
	}
}
