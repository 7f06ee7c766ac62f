package valuation

import (
	"math"
	"math/rand/v2"
	"testing"
)

// propCase is one random grant of the property tests: a ten-thousandth of
// a currency unit to 10^6 a share, strikes from a hundredth of the share
// price to 10^4 times it, volatilities of 5% to 150% within what auto mode
// resolves, terms of a day to 30 years, any vesting, exercise multiples of
// 1.01 to 11 or none, exit rates to 30%, dividend yields to 6% and rates
// of 0 to 8% (at or above 0, which the orderings in spot need).
type propCase struct {
	tm   Terms
	mk   Market
	rate float64
}

func propCases(n int, seed uint64) []propCase {
	rng := rand.New(rand.NewPCG(seed, 17))
	logU := func(lo, hi float64) float64 { return math.Exp(math.Log(lo) + rng.Float64()*math.Log(hi/lo)) }
	cs := make([]propCase, n)
	for i := range cs {
		T := logU(1.0/365, 30)
		S := logU(1e-4, 1e6)
		c := propCase{rate: 0.08 * rng.Float64()}
		c.tm = Terms{Strike: S * logU(1e-2, 1e4), YearsToExpiry: T, YearsToVest: T * rng.Float64() * float64(rng.IntN(2)), ExitRate: 0.3 * rng.Float64() * float64(rng.IntN(3)%2)}
		if rng.IntN(3) > 0 {
			c.tm.ExerciseMultiple = 1 + logU(0.01, 10)
		}
		c.mk = Market{Spot: S, VolAnnual: logU(0.05, math.Min(1.5, 6/math.Sqrt(T))), DividendYield: 0.06 * rng.Float64() * float64(rng.IntN(2)), Curve: FlatCurve(c.rate)}
		cs[i] = c
	}
	return cs
}

// propValue is the auto-mode value; ok is false where auto mode refuses the
// terms (beyond its step and node limits, as Feasible says).
func propValue(t *testing.T, tm Terms, mk Market) (Result, bool) {
	t.Helper()
	r, err := Lattice(tm, mk, LatticeOptions{})
	if err != nil {
		return r, false
	}
	if !(r.Value >= 0) || !(r.ErrorEstimate >= 0) || r.Value > mk.Spot*(1+1e-12) {
		t.Errorf("terms %+v spot %v vol %v q %v: %+v outside [0, spot]", tm, mk.Spot, mk.VolAnnual, mk.DividendYield, r)
	}
	return r, true
}

// Orderings that hold path by path, over random grants: the value lies
// between 0 and the share price (a call pays S_τ − K ≤ S_τ, and the share
// with its dividends reinvested, discounted, is a martingale: Merton 1973);
// it does not fall when the share price rises (with rates at or above 0 a
// higher path reaches the multiple sooner and pays no less at any end), and
// does not rise when the strike rises with the barrier M·K held. Without
// dividends it does not fall when the exercise multiple rises, nor rise
// when the exit rate rises (DESIGN §6): a vested award is then worth at
// least S − K, so ending it sooner costs. (With dividends an exit can be
// worth more than holding on: deep in the money, exercising early gains the
// dividends; the random grants found such cases.) Each
// ordering is asked within the two error estimates, which must be honest
// for it to hold.
func TestLatticeAutoOrderings(t *testing.T) {
	n := 200
	if testing.Short() {
		n = 40
	}
	checked, worth := 0, 0
	for _, c := range propCases(n, 23) {
		base, ok := propValue(t, c.tm, c.mk)
		if !ok {
			continue
		}
		checked++
		if base.Value > AutoNegligible*c.mk.Spot {
			worth++
		}
		order := func(what string, tm Terms, mk Market, up bool) {
			r, ok := propValue(t, tm, mk)
			if !ok {
				return
			}
			d := r.Value - base.Value
			if !up {
				d = -d
			}
			if d < -(r.ErrorEstimate + base.ErrorEstimate) {
				t.Errorf("%s: terms %+v spot %v vol %v q %v r %v: %.10g ± %.2g, base %.10g ± %.2g, the wrong way by %.2g",
					what, tm, mk.Spot, mk.VolAnnual, mk.DividendYield, c.rate, r.Value, r.ErrorEstimate, base.Value, base.ErrorEstimate, -d)
			}
		}
		mk := c.mk
		mk.Spot *= 1.1
		order("spot up 10%", c.tm, mk, true)
		tm := c.tm
		tm.Strike *= 1.1
		if tm.ExerciseMultiple > 0 {
			tm.ExerciseMultiple /= 1.1
		}
		if tm.ExerciseMultiple == 0 || tm.ExerciseMultiple > 1.001 {
			order("strike up 10%, barrier held", tm, c.mk, false)
		}
		if c.mk.DividendYield > 0 {
			continue
		}
		if c.tm.ExerciseMultiple > 0 {
			tm = c.tm
			tm.ExerciseMultiple *= 1.2
			order("multiple up 20%", tm, c.mk, true)
		}
		tm = c.tm
		tm.ExitRate = math.Min(0.95, c.tm.ExitRate+0.1)
		order("exit rate up 0.1", tm, c.mk, false)
	}
	t.Logf("%d random grants, %d valued, %d of them worth more than AutoNegligible of the share", n, checked, worth)
	if checked < n*2/3 || worth < checked/3 {
		t.Errorf("only %d of %d random grants valued, %d worth more than AutoNegligible of the share", checked, n, worth)
	}
}

// Limits that must hold exactly (DESIGN §6), over random grants far in and
// out of the money: vesting at expiry is the European Black-Scholes-Merton
// call (a closed form); no multiple, no exits and no dividends is the BSM
// call too, also with rational exercise, which puts it on the lattice
// (early exercise of a call on a share without dividends never pays,
// Merton 1973).
// The auto value must be within its error estimate of the closed form and
// that estimate within the target (AutoTarget of the value, or
// AutoNegligible of the share price; a closed form's rounding allowance of
// 1e-12 of the value, at least 1e-12, where that is more).
func TestLatticeAutoLimitsRandom(t *testing.T) {
	n := 200
	if testing.Short() {
		n = 40
	}
	worth := 0
	for i, c := range propCases(n, 29) {
		tm, mk := c.tm, c.mk
		what := "vesting at expiry"
		if i%2 == 0 {
			tm.YearsToVest = tm.YearsToExpiry
		} else {
			what = "rational exercise, no multiple, exits or dividends"
			tm.ExerciseMultiple, tm.ExitRate, mk.DividendYield, tm.Rational = 0, 0, 0, true
		}
		r, ok := propValue(t, tm, mk)
		if !ok {
			continue
		}
		want := BSMCall(BSMInputs{Spot: mk.Spot, Strike: tm.Strike, Years: tm.YearsToExpiry, Rate: c.rate, DividendYield: mk.DividendYield, Vol: mk.VolAnnual})
		if want > AutoNegligible*mk.Spot {
			worth++
		}
		e := math.Abs(r.Value - want)
		if e > r.ErrorEstimate || r.ErrorEstimate > max(AutoTarget*want, AutoNegligible*mk.Spot, 1e-12*math.Max(1, want)) || r.MissedTarget {
			t.Errorf("%s: terms %+v spot %v vol %v q %v r %v: %.10g ± %.2g (missed %v), BSM %.10g, error %.2g",
				what, tm, mk.Spot, mk.VolAnnual, mk.DividendYield, c.rate, r.Value, r.ErrorEstimate, r.MissedTarget, want, e)
		}
	}
	t.Logf("%d random grants, %d worth more than AutoNegligible of the share", n, worth)
}
