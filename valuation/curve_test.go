package valuation

import (
	"errors"
	"math"
	"testing"
)

// DESIGN §6 (rates): a 5.00% bond-equivalent (semiannual) yield is
// 2·ln(1.025) = 4.9385% continuous; an annual 5% is ln(1.05) = 4.8790%
// (common practice: m·ln(1 + r/m)).
func TestContinuousRate(t *testing.T) {
	const tol = 0.5e-6 // the quoted 4 decimals of a percent
	for _, c := range []struct {
		r    float64
		c    Compounding
		want float64
	}{{0.05, Semiannual, 0.049385}, {0.05, Annual, 0.048790}, {0.05, Continuous, 0.05}, {0, Semiannual, 0}} {
		if got := ContinuousRate(c.r, c.c); math.Abs(got-c.want) > tol {
			t.Errorf("ContinuousRate(%v, %v) = %.7f, want %.6f, tol %g", c.r, c.c, got, c.want, tol)
		}
	}
	if got, want := ContinuousRate(0.05, Semiannual), 2*math.Log(1.025); math.Abs(got-want) > 1e-15 {
		t.Errorf("semiannual: got %v, want 2·ln(1.025) = %v", got, want)
	}
}

func TestCurveInterpolation(t *testing.T) {
	const tol = 1e-14
	c, err := NewCurve([]CurvePoint{{5, 0.04, Continuous}, {1, 0.02, Continuous}, {2, 0.05, Semiannual}})
	if err != nil {
		t.Fatal(err)
	}
	z2 := 2 * math.Log1p(0.025)
	for _, p := range []struct{ t, want float64 }{
		{0, 0.02}, {0.5, 0.02}, {1, 0.02}, // flat before the first tenor
		{1.5, 0.02 + 0.5*(z2-0.02)}, // linear in tenor
		{2, z2},
		{3.5, z2 + 0.5*(0.04-z2)},
		{5, 0.04}, {30, 0.04}, // flat after the last
	} {
		if got := c.Zero(p.t); math.Abs(got-p.want) > tol {
			t.Errorf("Zero(%v) = %v, want %v", p.t, got, p.want)
		}
	}
	if got, want := c.Discount(3.5), math.Exp(-c.Zero(3.5)*3.5); math.Abs(got-want) > tol {
		t.Errorf("Discount(3.5) = %v, want e^(−z·t) = %v", got, want)
	}
	if got := c.Discount(0); got != 1 {
		t.Errorf("Discount(0) = %v, want 1", got)
	}
	// Forward over [t1, t2] reproduces the discount ratio.
	for _, iv := range [][2]float64{{0, 1}, {0.5, 1.5}, {1.2, 4.7}, {4, 9}, {6, 7}} {
		f := c.Forward(iv[0], iv[1])
		want := c.Discount(iv[0]) / c.Discount(iv[1])
		if got := math.Exp(f * (iv[1] - iv[0])); math.Abs(got-want) > 1e-13 {
			t.Errorf("Forward(%v, %v) = %v: growth %v, discount ratio %v", iv[0], iv[1], f, got, want)
		}
	}
	// Instantaneous forward: the limit of Forward over a shrinking interval.
	for _, x := range []float64{0.3, 1.5, 2, 3.5, 5, 8} {
		got := c.Forward(x, x)
		want := c.Forward(x, x+1e-7)
		if math.Abs(got-want) > 1e-6 {
			t.Errorf("Forward(%v, %v) = %v, want the limit %v", x, x, got, want)
		}
	}
	if got := FlatCurve(0.03).Forward(2, 7); math.Abs(got-0.03) > tol {
		t.Errorf("flat curve forward %v, want 0.03", got)
	}
}

func TestCurveErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		pts  []CurvePoint
	}{
		{"empty", nil},
		{"repeated tenor", []CurvePoint{{1, 0.02, Continuous}, {1, 0.03, Continuous}}},
		{"negative tenor", []CurvePoint{{-1, 0.02, Continuous}}},
		{"NaN tenor", []CurvePoint{{math.NaN(), 0.02, Continuous}}},
		{"NaN rate", []CurvePoint{{1, math.NaN(), Continuous}}},
		{"infinite rate", []CurvePoint{{1, math.Inf(1), Annual}}},
		{"annual at -100%", []CurvePoint{{1, -1, Annual}}},
	} {
		if _, err := NewCurve(c.pts); !errors.Is(err, ErrCurve) {
			t.Errorf("%s: NewCurve(%v) error %v, want ErrCurve", c.name, c.pts, err)
		}
	}
}
