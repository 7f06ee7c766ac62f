package valuation

import (
	"math"
	"testing"
)

// Each level's steps, half of their integrated rates taken from the level
// before, are those of the level computed alone, every logarithm afresh,
// to the last bit: the step ends of a level are those of the level before
// and the midpoints between them, in floating point too (an identity, no
// reference needed).
func TestLevelStepsReuseTheLevelBefore(t *testing.T) {
	curve, err := NewCurve([]CurvePoint{{Tenor: 0.5, Rate: 0.031}, {Tenor: 2, Rate: 0.036}, {Tenor: 7, Rate: 0.041}, {Tenor: 30, Rate: 0.043}})
	if err != nil {
		t.Fatal(err)
	}
	terms := Terms{Strike: 3.7, YearsToExpiry: 9.83, ExerciseMultiple: 2.2, ExitRate: 0.08}
	vest := []float64{0.37, 1.0, 1.0833, 2.71, 4.0}
	am, geo, err := autoPreflight(terms, vest, Market{Spot: 3.1, VolAnnual: 0.47, DividendYield: 0.01, Curve: curve}, Convention{})
	if err != nil {
		t.Fatal(err)
	}
	// alone is level lv's steps with every logarithm taken afresh.
	alone := func(lv int) []autoStep {
		var steps []autoStep
		for i, nb := range geo.base {
			n := nb << lv
			t0, t1 := geo.knots[i], geo.knots[i+1]
			lp := -math.Log(am.curve.Discount(t0))
			for k := 1; k <= n; k++ {
				tk := t0 + (t1-t0)*float64(k)/float64(n)
				if k == n {
					tk = t1
				}
				lq := -math.Log(am.curve.Discount(tk))
				dt := tk - (t0 + (t1-t0)*float64(k-1)/float64(n))
				steps = append(steps, autoStep{dt: dt, f: (lq - lp) / dt})
				lp = lq
			}
		}
		return steps
	}
	var prev []float64
	for lv := range 7 {
		steps, ints := am.levelSteps(&geo, lv, nil, prev, nil)
		want := alone(lv)
		if len(steps) != len(want) || len(ints) != len(want) {
			t.Fatalf("level %d: %d steps, %d integrated rates, %d alone", lv, len(steps), len(ints), len(want))
		}
		for k := range steps {
			if math.Float64bits(steps[k].dt) != math.Float64bits(want[k].dt) || math.Float64bits(steps[k].f) != math.Float64bits(want[k].f) {
				t.Fatalf("level %d step %d: %+v, alone %+v", lv, k, steps[k], want[k])
			}
		}
		prev = ints
	}
}
