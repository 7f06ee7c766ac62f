package valuation

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Compounding says how a quoted rate compounds.
type Compounding int

const (
	Continuous Compounding = iota
	Annual
	Semiannual
)

func (c Compounding) String() string {
	switch c {
	case Continuous:
		return "continuous"
	case Annual:
		return "annual"
	case Semiannual:
		return "semiannual"
	}
	return fmt.Sprintf("Compounding(%d)", int(c))
}

// ContinuousRate converts a rate quoted with compounding c to the continuously
// compounded rate with the same growth: m·ln(1 + r/m) for m periods a year.
func ContinuousRate(r float64, c Compounding) float64 {
	switch c {
	case Annual:
		return math.Log1p(r)
	case Semiannual:
		return 2 * math.Log1p(r/2)
	}
	return r
}

// CurvePoint is one quoted zero rate.
type CurvePoint struct {
	Tenor       float64 // years
	Rate        float64 // decimal, compounded as Compounding says
	Compounding Compounding
}

// ErrCurve is wrapped by every error NewCurve returns.
var ErrCurve = errors.New("bad zero curve")

// Curve is a zero curve: continuous zero rates at increasing tenors,
// interpolated linearly in tenor and held flat outside the quoted range.
// The zero value is not usable; build one with NewCurve or FlatCurve.
type Curve struct {
	tenors []float64
	zeros  []float64 // continuous
}

// FlatCurve is the curve with the same continuous zero rate r at every tenor.
func FlatCurve(r float64) *Curve {
	return &Curve{tenors: []float64{0}, zeros: []float64{r}}
}

// NewCurve builds a curve from quoted points in any order. It returns an
// error wrapping ErrCurve for no points, a negative, non-finite or repeated
// tenor, or a non-finite rate (or one whose compounding has no meaning, at or
// below -100%).
func NewCurve(points []CurvePoint) (*Curve, error) {
	if len(points) == 0 {
		return nil, fmt.Errorf("%w: no points", ErrCurve)
	}
	ps := append([]CurvePoint(nil), points...)
	sort.SliceStable(ps, func(i, j int) bool { return ps[i].Tenor < ps[j].Tenor })
	c := &Curve{tenors: make([]float64, len(ps)), zeros: make([]float64, len(ps))}
	for i, p := range ps {
		switch {
		case math.IsNaN(p.Tenor) || math.IsInf(p.Tenor, 0) || p.Tenor < 0:
			return nil, fmt.Errorf("%w: tenor %v is not a number of years at or above 0", ErrCurve, p.Tenor)
		case i > 0 && p.Tenor == ps[i-1].Tenor:
			return nil, fmt.Errorf("%w: tenor %v appears twice", ErrCurve, p.Tenor)
		case math.IsNaN(p.Rate) || math.IsInf(p.Rate, 0):
			return nil, fmt.Errorf("%w: rate %v at tenor %v is not finite", ErrCurve, p.Rate, p.Tenor)
		case p.Compounding == Annual && p.Rate <= -1, p.Compounding == Semiannual && p.Rate <= -2:
			return nil, fmt.Errorf("%w: rate %v at tenor %v is below -100%%", ErrCurve, p.Rate, p.Tenor)
		}
		c.tenors[i] = p.Tenor
		c.zeros[i] = ContinuousRate(p.Rate, p.Compounding)
	}
	return c, nil
}

// Zero is the continuous zero rate for tenor t years.
func (c *Curve) Zero(t float64) float64 {
	n := len(c.tenors)
	if t <= c.tenors[0] {
		return c.zeros[0]
	}
	if t >= c.tenors[n-1] {
		return c.zeros[n-1]
	}
	i := sort.SearchFloat64s(c.tenors, t) // tenors[i-1] < t <= tenors[i]
	t0, t1 := c.tenors[i-1], c.tenors[i]
	w := (t - t0) / (t1 - t0)
	return c.zeros[i-1] + w*(c.zeros[i]-c.zeros[i-1])
}

// Discount is the discount factor e^(−z(t)·t) for tenor t years.
func (c *Curve) Discount(t float64) float64 {
	return math.Exp(-c.Zero(t) * t)
}

// Forward is the continuous forward rate over [t1, t2]:
// (z(t2)·t2 − z(t1)·t1)/(t2 − t1). For t1 == t2 it is the instantaneous
// forward d(z·t)/dt = z(t) + t·z′(t), taking the slope to the right of a
// quoted tenor.
func (c *Curve) Forward(t1, t2 float64) float64 {
	if t2 == t1 {
		n := len(c.tenors)
		if t1 < c.tenors[0] || t1 >= c.tenors[n-1] {
			return c.Zero(t1)
		}
		i := sort.SearchFloat64s(c.tenors, t1) // tenors[i-1] < t1 <= tenors[i]
		if c.tenors[i] == t1 {
			i++ // right slope at a quoted tenor
		}
		slope := (c.zeros[i] - c.zeros[i-1]) / (c.tenors[i] - c.tenors[i-1])
		return c.Zero(t1) + t1*slope
	}
	return (c.Zero(t2)*t2 - c.Zero(t1)*t1) / (t2 - t1)
}

// Points returns the curve's tenors and continuous zero rates.
func (c *Curve) Points() (tenors, zeros []float64) {
	return append([]float64(nil), c.tenors...), append([]float64(nil), c.zeros...)
}
