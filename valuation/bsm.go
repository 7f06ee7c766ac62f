package valuation

import (
	"fmt"
	"math"
)

// BSMInputs are the inputs of the Black-Scholes-Merton formula for a
// European option on a share paying a continuous dividend yield.
//
// Preconditions (checked by Check; the pricing functions panic when they do
// not hold): every field finite, Spot > 0, Strike >= 0, Years >= 0, Vol >= 0.
type BSMInputs struct {
	Spot          float64 // S, currency per share
	Strike        float64 // K
	Years         float64 // T, years to expiry
	Rate          float64 // r, continuously compounded zero rate to T
	DividendYield float64 // q, continuous
	Vol           float64 // sigma, annual
}

// Check returns an error naming the first input outside its domain.
func (in BSMInputs) Check() error {
	for _, f := range []struct {
		name string
		v    float64
	}{{"spot", in.Spot}, {"strike", in.Strike}, {"years", in.Years}, {"rate", in.Rate}, {"dividend yield", in.DividendYield}, {"volatility", in.Vol}} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) {
			return fmt.Errorf("%s %v is not a finite number", f.name, f.v)
		}
	}
	switch {
	case in.Spot <= 0:
		return fmt.Errorf("spot %v must be above 0", in.Spot)
	case in.Strike < 0:
		return fmt.Errorf("strike %v must be at or above 0", in.Strike)
	case in.Years < 0:
		return fmt.Errorf("years %v must be at or above 0", in.Years)
	case in.Vol < 0:
		return fmt.Errorf("volatility %v must be at or above 0", in.Vol)
	}
	return nil
}

func (in BSMInputs) mustCheck() {
	if err := in.Check(); err != nil {
		panic("valuation: BSM inputs: " + err.Error())
	}
}

// stdNormCDF is the standard normal distribution function, from math.Erfc
// (accurate to full precision in both tails).
func stdNormCDF(x float64) float64 { return 0.5 * math.Erfc(-x/math.Sqrt2) }

// stdNormPDF is the standard normal density.
func stdNormPDF(x float64) float64 { return math.Exp(-0.5*x*x) / math.Sqrt(2*math.Pi) }

// bsmParts returns the discounted spot S·e^(−qT), discounted strike
// K·e^(−rT), d1 and d2, and whether the option is degenerate (no time value
// left: T = 0 or sigma = 0), in which case d1, d2 are not defined.
func bsmParts(in BSMInputs) (fs, fk, d1, d2 float64, degenerate bool) {
	fs = in.Spot * math.Exp(-in.DividendYield*in.Years)
	fk = in.Strike * math.Exp(-in.Rate*in.Years)
	sd := in.Vol * math.Sqrt(in.Years)
	if sd == 0 || in.Strike == 0 {
		return fs, fk, 0, 0, true
	}
	d1 = (math.Log(fs/fk) + 0.5*sd*sd) / sd
	return fs, fk, d1, d1 - sd, false
}

// BSMCall is the Black-Scholes-Merton value of a European call with a
// continuous dividend yield (Merton 1973):
//
//	C = S·e^(−qT)·N(d1) − K·e^(−rT)·N(d2)
//	d1 = (ln(S/K) + (r − q + σ²/2)·T) / (σ√T),  d2 = d1 − σ√T.
//
// With no time value left (T = 0 or σ = 0) it is max(S·e^(−qT) − K·e^(−rT), 0).
// It panics when in fails Check.
func BSMCall(in BSMInputs) float64 {
	in.mustCheck()
	fs, fk, d1, d2, deg := bsmParts(in)
	if deg {
		return math.Max(fs-fk, 0)
	}
	return fs*stdNormCDF(d1) - fk*stdNormCDF(d2)
}

// BSMPut is the Black-Scholes-Merton value of a European put:
//
//	P = K·e^(−rT)·N(−d2) − S·e^(−qT)·N(−d1).
//
// It panics when in fails Check.
func BSMPut(in BSMInputs) float64 {
	in.mustCheck()
	fs, fk, d1, d2, deg := bsmParts(in)
	if deg {
		return math.Max(fk-fs, 0)
	}
	return fk*stdNormCDF(-d2) - fs*stdNormCDF(-d1)
}

// Greeks are the sensitivities of a Black-Scholes-Merton value V, all per
// unit of the input (not per 1%, not per day):
//
//	Delta = ∂V/∂S, Gamma = ∂²V/∂S², Vega = ∂V/∂σ,
//	Theta = −∂V/∂T (the change as time passes, per year), Rho = ∂V/∂r.
type Greeks struct {
	Delta, Gamma, Vega, Theta, Rho float64
}

// BSMGreeks returns the Greeks of the European call (call = true) or put,
// from the closed forms (Hull, Options, Futures, and Other Derivatives, the
// chapter on the Greek letters; with q as in Merton 1973):
//
//	call: Δ = e^(−qT)N(d1); Θ = −S e^(−qT) φ(d1) σ/(2√T) − rK e^(−rT) N(d2) + qS e^(−qT) N(d1); ρ = KT e^(−rT) N(d2)
//	put:  Δ = −e^(−qT)N(−d1); Θ = −S e^(−qT) φ(d1) σ/(2√T) + rK e^(−rT) N(−d2) − qS e^(−qT) N(−d1); ρ = −KT e^(−rT) N(−d2)
//	both: Γ = e^(−qT) φ(d1)/(Sσ√T); vega = S e^(−qT) φ(d1) √T.
//
// With no time value left (T = 0 or σ = 0) Gamma and Vega are 0 and Delta,
// Theta and Rho are those of the discounted intrinsic value. It panics when
// in fails Check.
func BSMGreeks(in BSMInputs, call bool) Greeks {
	in.mustCheck()
	fs, fk, d1, d2, deg := bsmParts(in)
	q, r, T := in.DividendYield, in.Rate, in.Years
	if deg {
		// V = max(±(fs − fk), 0): linear in fs and fk where it is not zero.
		itm := fs > fk
		sign := 1.0
		if !call {
			itm, sign = fk > fs, -1
		}
		if !itm {
			return Greeks{}
		}
		return Greeks{
			Delta: sign * fs / in.Spot,
			Theta: sign * (q*fs - r*fk),
			Rho:   sign * T * fk,
		}
	}
	sqrtT := math.Sqrt(T)
	pdf := stdNormPDF(d1)
	g := Greeks{
		Gamma: fs * pdf / (in.Spot * in.Spot * in.Vol * sqrtT),
		Vega:  fs * pdf * sqrtT,
	}
	decay := -fs * pdf * in.Vol / (2 * sqrtT)
	if call {
		g.Delta = fs / in.Spot * stdNormCDF(d1)
		g.Theta = decay - r*fk*stdNormCDF(d2) + q*fs*stdNormCDF(d1)
		g.Rho = T * fk * stdNormCDF(d2)
	} else {
		g.Delta = -fs / in.Spot * stdNormCDF(-d1)
		g.Theta = decay + r*fk*stdNormCDF(-d2) - q*fs*stdNormCDF(-d1)
		g.Rho = -T * fk * stdNormCDF(-d2)
	}
	return g
}

// checkClosedForm returns an error naming the first market or terms input that
// a closed form cannot use. It panics on a nil curve (programmer misuse).
func checkClosedForm(t Terms, m Market) error {
	if m.Curve == nil {
		panic("valuation: Market.Curve is nil")
	}
	switch {
	case !(t.YearsToExpiry > 0) || math.IsInf(t.YearsToExpiry, 0):
		return fmt.Errorf("years to expiry %v must be a finite number above 0", t.YearsToExpiry)
	case !(t.Strike >= 0) || math.IsInf(t.Strike, 0):
		return fmt.Errorf("strike %v must be a finite number at or above 0", t.Strike)
	case !(t.YearsToVest >= 0) || t.YearsToVest > t.YearsToExpiry:
		return fmt.Errorf("years to vest %v must lie between 0 and the years to expiry %v", t.YearsToVest, t.YearsToExpiry)
	case !(m.Spot > 0) || math.IsInf(m.Spot, 0):
		return fmt.Errorf("spot %v must be a finite number above 0", m.Spot)
	case !(m.VolAnnual > 0) || math.IsInf(m.VolAnnual, 0):
		return fmt.Errorf("volatility %v must be a finite number above 0", m.VolAnnual)
	case math.IsNaN(m.DividendYield) || math.IsInf(m.DividendYield, 0):
		return fmt.Errorf("dividend yield %v is not a finite number", m.DividendYield)
	}
	return nil
}

// bsmCallOn is the BSM call on the terms' strike with `years` to expiry and
// the curve's zero rate to that date.
func bsmCallOn(t Terms, m Market, years float64) float64 {
	return BSMCall(BSMInputs{
		Spot: m.Spot, Strike: t.Strike, Years: years,
		Rate: m.Curve.Zero(years), DividendYield: m.DividendYield, Vol: m.VolAnnual,
	})
}

// BlackScholes is the Black-Scholes-Merton value of the award as a European
// call expiring at t.YearsToExpiry, with the curve's zero rate to that date.
// Vesting, the exercise multiple and exits are ignored. ExpectedTermYears is
// the contractual term; ErrorEstimate is 0 (closed form); Steps is 0.
func BlackScholes(t Terms, m Market) (Result, error) {
	if err := checkClosedForm(t, m); err != nil {
		return Result{}, err
	}
	return Result{
		Value:             bsmCallOn(t, m, t.YearsToExpiry),
		ExpectedTermYears: t.YearsToExpiry,
		Method:            MethodBSM,
	}, nil
}

// SimplifiedTerm is the expected term of the SEC Staff Accounting Bulletin
// 107 simplified method for one tranche: the midpoint of its vesting date
// and the contractual expiry, (V + T)/2. For a grant of several tranches
// the bulletin averages their vest dates first; valuing each tranche on its
// own term and averaging the terms gives the same figure.
func SimplifiedTerm(t Terms) float64 {
	return (t.YearsToVest + t.YearsToExpiry) / 2
}

// SimplifiedBSM is the Black-Scholes-Merton call on the simplified-method
// expected term (SimplifiedTerm), with the curve's zero rate to that term:
// the comparison column of the reports. ExpectedTermYears is that term.
func SimplifiedBSM(t Terms, m Market) (Result, error) {
	if err := checkClosedForm(t, m); err != nil {
		return Result{}, err
	}
	term := SimplifiedTerm(t)
	return Result{
		Value:             bsmCallOn(t, m, term),
		ExpectedTermYears: term,
		Method:            MethodBSM,
	}, nil
}
