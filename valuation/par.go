package valuation

import (
	"fmt"
	"math"
	"sort"
)

// BootstrapPar builds a continuous zero curve from government par yields
// with semiannual coupons, the way yields on notes and bonds are quoted.
//
// Instruments. A quoted tenor t of half a year or more must be a whole
// number of half-years; its par bond pays y/2 per 1 of face every half-year
// up to t and the face at t, and is priced at par. A tenor below half a year
// is a bill with one payment of 1 + y·t at t (a single short coupon period),
// also priced at par.
//
// Interpolation (our choice, stated in every memo that uses it): par yields
// are interpolated linearly in tenor between quoted tenors, and held flat
// before the first and after the last, at every half-year from 0.5 to the
// longest tenor. The discount factors then follow exactly, shortest first:
//
//	P(t_k) = (1 − y_k/2 · Σ_{j<k} P(t_j)) / (1 + y_k/2),   t_k = k/2,
//
// and the zero rate is z(t_k) = −ln P(t_k)/t_k. The returned curve holds the
// zero rate at each bill tenor and at each half-year and interpolates
// linearly between them (as NewCurve does), so every coupon date of every
// quoted bond is a node and every quoted bond reprices to par up to
// rounding. Between nodes the curve interpolates zero rates, not par yields.
//
// Errors name the culprit: lengths that differ, no points, a tenor that is
// not finite and positive, repeated, or at or above half a year but not a
// whole number of half-years (to 1e-9), a yield that is not finite, or a
// yield curve so inverted that a discount factor is not positive.
func BootstrapPar(tenors, parYields []float64) (*Curve, error) {
	if len(tenors) != len(parYields) {
		return nil, fmt.Errorf("%w: %d tenors but %d par yields", ErrCurve, len(tenors), len(parYields))
	}
	if len(tenors) == 0 {
		return nil, fmt.Errorf("%w: no par yields", ErrCurve)
	}
	type quote struct{ t, y float64 }
	qs := make([]quote, len(tenors))
	for i := range tenors {
		qs[i] = quote{tenors[i], parYields[i]}
	}
	sort.SliceStable(qs, func(i, j int) bool { return qs[i].t < qs[j].t })
	for i, q := range qs {
		switch {
		case math.IsNaN(q.t) || math.IsInf(q.t, 0) || q.t <= 0:
			return nil, fmt.Errorf("%w: par tenor %v is not a number of years above 0", ErrCurve, q.t)
		case i > 0 && q.t == qs[i-1].t:
			return nil, fmt.Errorf("%w: par tenor %v appears twice", ErrCurve, q.t)
		case q.t >= 0.5 && math.Abs(2*q.t-math.Round(2*q.t)) > 1e-9:
			return nil, fmt.Errorf("%w: par tenor %v is not a whole number of half-years (semiannual coupons)", ErrCurve, q.t)
		case math.IsNaN(q.y) || math.IsInf(q.y, 0):
			return nil, fmt.Errorf("%w: par yield %v at tenor %v is not finite", ErrCurve, q.y, q.t)
		}
	}
	parAt := func(t float64) float64 { // linear in tenor, flat outside
		if t <= qs[0].t {
			return qs[0].y
		}
		n := len(qs)
		if t >= qs[n-1].t {
			return qs[n-1].y
		}
		i := sort.Search(n, func(i int) bool { return qs[i].t >= t })
		a, b := qs[i-1], qs[i]
		return a.y + (t-a.t)/(b.t-a.t)*(b.y-a.y)
	}
	var points []CurvePoint
	for _, q := range qs {
		if q.t >= 0.5 {
			break
		}
		g := 1 + q.y*q.t
		if !(g > 0) {
			return nil, fmt.Errorf("%w: par yield %v at tenor %v gives no positive discount factor", ErrCurve, q.y, q.t)
		}
		points = append(points, CurvePoint{Tenor: q.t, Rate: math.Log(g) / q.t})
	}
	halves := int(math.Round(2 * qs[len(qs)-1].t))
	annuity := 0.0 // Σ P(t_j) over the coupon dates so far
	for k := 1; k <= halves; k++ {
		t := float64(k) / 2
		y := parAt(t)
		p := (1 - y/2*annuity) / (1 + y/2)
		if !(p > 0) {
			return nil, fmt.Errorf("%w: par yield %v at tenor %v (interpolated from the quotes) gives no positive discount factor", ErrCurve, y, t)
		}
		points = append(points, CurvePoint{Tenor: t, Rate: -math.Log(p) / t})
		annuity += p
	}
	return NewCurve(points)
}

// ParBondPrice is the price per 1 of face, on curve c, of the bond
// BootstrapPar treats as quoted at tenor t with coupon rate y: semiannual
// coupons y/2 and the face at t for t of half a year or more, one payment of
// 1 + y·t at t below that. A bootstrapped curve prices every quoted bond at 1.
func ParBondPrice(c *Curve, t, y float64) float64 {
	if t < 0.5 {
		return (1 + y*t) * c.Discount(t)
	}
	n := int(math.Round(2 * t))
	pv := 0.0
	for k := 1; k <= n; k++ {
		pv += y / 2 * c.Discount(float64(k)/2)
	}
	return pv + c.Discount(float64(n)/2)
}
