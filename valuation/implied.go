package valuation

import (
	"errors"
	"fmt"
	"math"
)

// ErrNoArbitrage is wrapped by ImpliedVol when the price lies outside the
// bounds that any volatility can reach.
var ErrNoArbitrage = errors.New("price outside the no-arbitrage bounds")

// ImpliedVol returns the volatility at which the Black-Scholes-Merton value
// of the European call (call = true) or put with inputs in (in.Vol ignored)
// equals price.
//
// The BSM value rises strictly with σ from the discounted intrinsic value
// (σ → 0) towards its upper bound (σ → ∞): S·e^(−qT) for a call, K·e^(−rT)
// for a put. A price outside that open interval has no implied volatility
// and the error wraps ErrNoArbitrage and states the bounds. Inside it, the
// root is bracketed (the upper end doubled from 1 until it brackets, up to
// σ = 64) and found by Brent's method (Brent, Algorithms for Minimization
// without Derivatives, 1973, ch. 4) to an absolute volatility tolerance of
// 1e-12, or until the price matches to 1e-14 relative.
func ImpliedVol(price float64, in BSMInputs, call bool) (float64, error) {
	in.Vol = 0
	if err := in.Check(); err != nil {
		return 0, err
	}
	if math.IsNaN(price) || math.IsInf(price, 0) {
		return 0, fmt.Errorf("price %v is not a finite number", price)
	}
	if in.Years == 0 {
		return 0, fmt.Errorf("%w: an option at expiry has no time value, so no implied volatility", ErrNoArbitrage)
	}
	value := BSMPut
	kind := "put"
	if call {
		value, kind = BSMCall, "call"
	}
	lower := value(in) // σ = 0: discounted intrinsic value
	upper := in.Strike * math.Exp(-in.Rate*in.Years)
	if call {
		upper = in.Spot * math.Exp(-in.DividendYield*in.Years)
	}
	if !(price > lower && price < upper) {
		return 0, fmt.Errorf("%w: a %s price must lie strictly between %.10g and %.10g, got %.10g", ErrNoArbitrage, kind, lower, upper, price)
	}
	f := func(vol float64) float64 {
		x := in
		x.Vol = vol
		return value(x) - price
	}
	lo, hi := 0.0, 1.0
	flo, fhi := lower-price, f(hi)
	for fhi < 0 {
		if hi >= 64 {
			return 0, fmt.Errorf("%w: the %s price %.10g needs a volatility above %v", ErrNoArbitrage, kind, price, hi)
		}
		lo, flo = hi, fhi
		hi *= 2
		fhi = f(hi)
	}
	return rootBrent(f, lo, hi, flo, fhi, 1e-12, 1e-14*price)
}

// rootBrent finds a root of f in [a, b] where fa = f(a) and fb = f(b) have
// opposite signs (or one is 0), by Brent's method: inverse quadratic
// interpolation or secant steps, falling back to bisection so that the
// bracket always shrinks. It stops when the bracket is narrower than xtol
// (plus a few ulps) or |f| <= ftol, and fails after 200 iterations.
func rootBrent(f func(float64) float64, a, b, fa, fb, xtol, ftol float64) (float64, error) {
	if fa == 0 {
		return a, nil
	}
	if fb == 0 {
		return b, nil
	}
	if math.Signbit(fa) == math.Signbit(fb) {
		return 0, fmt.Errorf("root not bracketed: f(%g) = %g and f(%g) = %g", a, fa, b, fb)
	}
	c, fc := a, fa
	d := b - a
	e := d
	for iter := 0; iter < 200; iter++ {
		if math.Signbit(fb) == math.Signbit(fc) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol := 2*2.2e-16*math.Abs(b) + 0.5*xtol
		m := 0.5 * (c - b)
		if math.Abs(m) <= tol || math.Abs(fb) <= ftol {
			return b, nil
		}
		if math.Abs(e) >= tol && math.Abs(fa) > math.Abs(fb) {
			var p, q float64
			s := fb / fa
			if a == c {
				p = 2 * m * s
				q = 1 - s
			} else {
				qq := fa / fc
				r := fb / fc
				p = s * (2*m*qq*(qq-r) - (b-a)*(r-1))
				q = (qq - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			} else {
				p = -p
			}
			if 2*p < math.Min(3*m*q-math.Abs(tol*q), math.Abs(e*q)) {
				e = d
				d = p / q
			} else {
				d = m
				e = m
			}
		} else {
			d = m
			e = m
		}
		a, fa = b, fb
		if math.Abs(d) > tol {
			b += d
		} else if m > 0 {
			b += tol
		} else {
			b -= tol
		}
		fb = f(b)
		if fb == 0 {
			return b, nil
		}
	}
	return b, fmt.Errorf("root finding did not converge in 200 iterations near %g", b)
}
