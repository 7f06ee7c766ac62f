package valuation

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"testing"
)

type qlParSet struct {
	Name       string    `json:"name"`
	Tenors     []float64 `json:"tenors"`
	ParYields  []float64 `json:"par_yields"`
	Matched    []qlZero  `json:"matched"`
	QuotedOnly []qlZero  `json:"quoted_only"`
}

type qlZero struct {
	Tenor    float64 `json:"tenor"`
	Zero     float64 `json:"zero"`
	Discount float64 `json:"discount"`
}

func loadQuantLibPar(t *testing.T) (string, []qlParSet) {
	t.Helper()
	b, err := os.ReadFile("testdata/quantlib_par.json")
	if err != nil {
		t.Fatal(err)
	}
	var f struct {
		Version string     `json:"quantlib_version"`
		Sets    []qlParSet `json:"sets"`
	}
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatal(err)
	}
	if len(f.Sets) == 0 {
		t.Fatal("testdata/quantlib_par.json has no curves")
	}
	return f.Version, f.Sets
}

// Every quoted par bond reprices to par on the bootstrapped curve (the
// definition of the bootstrap; issue 4 asks for 1e-10).
func TestBootstrapParReprices(t *testing.T) {
	const tol = 1e-10 // price per 1 of face
	_, sets := loadQuantLibPar(t)
	worst := 0.0
	for _, s := range sets {
		c, err := BootstrapPar(s.Tenors, s.ParYields)
		if err != nil {
			t.Fatalf("%s: %v", s.Name, err)
		}
		for i, tn := range s.Tenors {
			p := ParBondPrice(c, tn, s.ParYields[i])
			worst = math.Max(worst, math.Abs(p-1))
			if math.Abs(p-1) > tol {
				t.Errorf("%s: par bond %v years at %v prices %.15f, want 1, tol %g", s.Name, tn, s.ParYields[i], p, tol)
			}
		}
	}
	t.Logf("largest repricing error %.2g per 1 of face", worst)
}

// A flat 5.00% semiannual par curve is a flat 5.00% bond-equivalent zero
// curve: 2·ln(1.025) = 4.9385% continuous at every half-year (DESIGN §6).
func TestBootstrapParFlat(t *testing.T) {
	const tol = 1e-14
	c, err := BootstrapPar([]float64{0.5, 2, 10}, []float64{0.05, 0.05, 0.05})
	if err != nil {
		t.Fatal(err)
	}
	want := 2 * math.Log(1.025)
	if math.Abs(want-0.049385) > 5e-7 {
		t.Fatalf("2 ln 1.025 = %v, not 4.9385%%", want)
	}
	for k := 1; k <= 20; k++ {
		if z := c.Zero(float64(k) / 2); math.Abs(z-want) > tol {
			t.Errorf("zero at %v years: %.15f, want %.15f", float64(k)/2, z, want)
		}
	}
}

// QuantLib golden curves (testdata/quantlib_par_gen.py, QuantLib 1.29,
// PiecewiseLinearZero with bond and deposit helpers, 30/360 so that each
// half-year is exactly 0.5 years).
//
//   - matched: QuantLib fed our interpolated par yield at every half-year
//     solves the same equations; the only residual is its iterative
//     solver's accuracy (1e-12 by default), so zeros agree to 1e-10.
//   - quoted_only: QuantLib fed the quotes alone interpolates zero rates,
//     not par yields, between quotes. At quoted tenors up to 2 years both
//     are pinned by the same bonds; beyond, the curves differ by a few basis
//     points (2.0 bp at most on these sets). The test bounds it at 5 bp.
func TestBootstrapParQuantLib(t *testing.T) {
	const (
		tolMatched = 1e-10 // continuous zero rate
		tolQuoted  = 5e-4  // 5 basis points; 2.0 bp measured on the upward set
	)
	version, sets := loadQuantLibPar(t)
	for _, s := range sets {
		c, err := BootstrapPar(s.Tenors, s.ParYields)
		if err != nil {
			t.Fatal(err)
		}
		worstM, worstQ := 0.0, 0.0
		for _, z := range s.Matched {
			d := math.Abs(c.Zero(z.Tenor) - z.Zero)
			worstM = math.Max(worstM, d)
			if d > tolMatched {
				t.Errorf("%s: zero at %v: got %.15f, QuantLib %s matched %.15f, tol %g", s.Name, z.Tenor, c.Zero(z.Tenor), version, z.Zero, tolMatched)
			}
		}
		for _, z := range s.QuotedOnly {
			d := math.Abs(c.Zero(z.Tenor) - z.Zero)
			worstQ = math.Max(worstQ, d)
			if d > tolQuoted {
				t.Errorf("%s: zero at %v: got %.6f, QuantLib %s quotes only %.6f, tol %g", s.Name, z.Tenor, c.Zero(z.Tenor), version, z.Zero, tolQuoted)
			}
		}
		t.Logf("%s: largest zero-rate difference from QuantLib %s: matched %.2g, quotes only %.2g (%.2f bp)", s.Name, version, worstM, worstQ, worstQ*1e4)
	}
}

func TestBootstrapParErrors(t *testing.T) {
	for _, c := range []struct {
		name   string
		tenors []float64
		yields []float64
	}{
		{"no points", nil, nil},
		{"lengths differ", []float64{1, 2}, []float64{0.04}},
		{"zero tenor", []float64{0, 1}, []float64{0.04, 0.04}},
		{"negative tenor", []float64{-1}, []float64{0.04}},
		{"repeated tenor", []float64{1, 1}, []float64{0.04, 0.05}},
		{"not a half-year", []float64{1.3}, []float64{0.04}},
		{"non-finite yield", []float64{1}, []float64{math.NaN()}},
		{"no positive discount", []float64{0.5, 30}, []float64{0.01, 3}},
	} {
		if _, err := BootstrapPar(c.tenors, c.yields); !errors.Is(err, ErrCurve) {
			t.Errorf("%s: err %v, want ErrCurve", c.name, err)
		}
	}
}
