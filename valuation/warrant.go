package valuation

import (
	"fmt"
	"math"
)

// Dilution describes the share count a warrant issue dilutes.
//
// When the warrants are exercised the company issues W new shares at the
// strike, so each warrant is worth N/(N+W) of a call on the share value of
// the enlarged company (Hull, Options, Futures, and Other Derivatives, the
// section on warrants and dilution; Galai and Schneller, Journal of Finance
// 33, 1978).
//
//   - A new issue (PriceReflectsWarrants false): the share price S0 does not
//     yet reflect the warrants, and the warrant is N/(N+W)·C(S0).
//   - Warrants already outstanding (PriceReflectsWarrants true): S0 is net of
//     the warrants' value, so the equity per share before dilution is
//     S0 + (W/N)·w and the warrant value w solves the fixed point
//     w = N/(N+W)·C(S0 + (W/N)·w) (Galai-Schneller).
//
// In both cases C is valued with the volatility of the share as given; the
// textbook method asks for the volatility of the whole equity including the
// warrants, which the caller must supply if it differs.
type Dilution struct {
	SharesOutstanding     float64 // N, shares in issue before exercise
	Warrants              float64 // W, shares issued if every warrant is exercised
	PriceReflectsWarrants bool
}

// Factor is N/(N+W).
func (d Dilution) Factor() float64 {
	return d.SharesOutstanding / (d.SharesOutstanding + d.Warrants)
}

// Check returns an error naming a share count that is not usable.
func (d Dilution) Check() error {
	switch {
	case !(d.SharesOutstanding > 0) || math.IsInf(d.SharesOutstanding, 0):
		return fmt.Errorf("shares outstanding %v must be a finite number above 0", d.SharesOutstanding)
	case !(d.Warrants >= 0) || math.IsInf(d.Warrants, 0):
		return fmt.Errorf("warrants %v must be a finite number at or above 0", d.Warrants)
	}
	return nil
}

// DilutedValue applies the dilution d to a call-value function: for a new
// issue it is Factor()·call(spot); with the price reflecting the warrants it
// solves w = Factor()·call(spot + (W/N)·w) for w. It also returns the share
// value at which call was finally evaluated.
//
// The fixed point lies in [0, spot]: a call is worth less than its share, so
// Factor()·call(spot + (W/N)·w) <= Factor()·(spot + (W/N)·w), which is below
// w once w exceeds spot; g(w) = w − Factor()·call(spot + (W/N)·w) is
// therefore at most 0 at w = 0 and at least 0 at w = spot. The root is found
// by Brent's method (rootBrent) to 1e-12·spot. call must be nondecreasing in
// the share value, as every call value is.
func DilutedValue(d Dilution, spot float64, call func(spot float64) (float64, error)) (w, atSpot float64, err error) {
	if err := d.Check(); err != nil {
		return 0, 0, err
	}
	f := d.Factor()
	if !d.PriceReflectsWarrants || d.Warrants == 0 {
		c, err := call(spot)
		return f * c, spot, err
	}
	ratio := d.Warrants / d.SharesOutstanding
	var callErr error
	g := func(w float64) float64 {
		c, err := call(spot + ratio*w)
		if err != nil && callErr == nil {
			callErr = err
		}
		return w - f*c
	}
	g0 := g(0)
	gs := g(spot)
	if callErr != nil {
		return 0, 0, callErr
	}
	w, err = rootBrent(g, 0, spot, g0, gs, 1e-12*spot, 0)
	if callErr != nil {
		return 0, 0, callErr
	}
	if err != nil {
		return 0, 0, fmt.Errorf("Galai-Schneller dilution: %w", err)
	}
	return w, spot + ratio*w, nil
}

// EuropeanWarrant is the value per warrant of a European warrant (exercise
// at expiry only) under the dilution d: the Black-Scholes-Merton call of
// BlackScholes, diluted as Dilution describes. Vesting, the exercise
// multiple and exits in t are ignored.
func EuropeanWarrant(t Terms, m Market, d Dilution) (Result, error) {
	if err := checkClosedForm(t, m); err != nil {
		return Result{}, err
	}
	w, _, err := DilutedValue(d, m.Spot, func(s float64) (float64, error) {
		mm := m
		mm.Spot = s
		return bsmCallOn(t, mm, t.YearsToExpiry), nil
	})
	if err != nil {
		return Result{}, err
	}
	return Result{Value: w, ExpectedTermYears: t.YearsToExpiry, Method: MethodBSM}, nil
}

// WarrantValue is the value per warrant under the dilution d.
//
// European terms (t.European) use EuropeanWarrant. Otherwise the warrant is
// exercisable at any time after vesting: the call C in Dilution's formulas is
// the lattice value of the same terms with rational exercise
// (t.Rational = true; Lattice with options o), and the dilution is then
// applied to it. That is an approximation for American warrants, the usual
// one: the dilution factor treats the whole issue as exercised at once at the
// optimal time of one undiluted call, whereas holders exercising early in
// part change the share count and the share price process afterwards. It is
// exact when early exercise is never optimal (no dividends, no exit, no
// multiple), where it equals the European value.
//
// The result's ErrorEstimate is the lattice's error estimate ε times
// N/(N+W) for a new issue. When the share price reflects the warrants, the
// fixed point w = f·C(S0 + (W/N)·w) passes an error ε in C on as
// f·ε/(1 − f·(W/N)·∂C/∂S), at most ε since the delta is at most 1, so the
// estimate is ε itself. It is 0 for European terms; ExpectedTermYears,
// TermError, Steps, Method and MissedTarget are the lattice's at the share
// value the call was finally evaluated at.
func WarrantValue(t Terms, m Market, d Dilution, o LatticeOptions) (Result, error) {
	if t.European {
		return EuropeanWarrant(t, m, d)
	}
	if err := checkClosedForm(t, m); err != nil {
		return Result{}, err
	}
	tt := t
	tt.Rational = true
	var last Result
	w, at, err := DilutedValue(d, m.Spot, func(s float64) (float64, error) {
		mm := m
		mm.Spot = s
		r, err := Lattice(tt, mm, o)
		last = r
		return r.Value, err
	})
	if err != nil {
		return Result{}, err
	}
	if at != m.Spot { // the root finder's last call need not be at the root
		mm := m
		mm.Spot = at
		if last, err = Lattice(tt, mm, o); err != nil {
			return Result{}, err
		}
	}
	return Result{
		Value:             w,
		ErrorEstimate:     d.CarryError(last.ErrorEstimate),
		ExpectedTermYears: last.ExpectedTermYears,
		TermError:         last.TermError,
		Steps:             last.Steps,
		Method:            MethodLattice,
		MissedTarget:      last.MissedTarget,
	}, nil
}

// CarryError is the error in a diluted value that an error callErr in the
// undiluted call leaves: N/(N+W)·callErr for a new issue; for a price that
// reflects the warrants the fixed point w = f·C(S0 + (W/N)·w) passes it on as
// f·callErr/(1 − f·(W/N)·∂C/∂S), at most callErr since the delta is at most 1.
func (d Dilution) CarryError(callErr float64) float64 {
	if d.PriceReflectsWarrants {
		return callErr
	}
	return d.Factor() * callErr
}
