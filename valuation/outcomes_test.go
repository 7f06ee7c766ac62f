package valuation

import (
	"fmt"
	"math"
	"testing"
)

// outcomeZMax is the agreement demanded of a simulated figure: within this
// many standard errors of its reference (fixed seeds: a failure is a bias,
// not bad luck).
const outcomeZMax = 4

func simulate(t *testing.T, tr []Terms, w []float64, m Market, o OutcomeOptions) *Outcomes {
	t.Helper()
	out, err := SimulateOutcomes(tr, w, m, o)
	if err != nil {
		t.Fatal(err)
	}
	sumE, sumY, sumM := 0.0, 0.0, 0.0
	for _, p := range out.Endings {
		sumE += p
	}
	for _, p := range out.EndYears {
		sumY += p
	}
	for _, p := range out.EndMonths {
		sumM += p
	}
	if math.Abs(sumE-1) > 1e-9 || math.Abs(sumY-1) > 1e-9 || math.Abs(sumM-1) > 1e-9 {
		t.Errorf("endings add up to %v, end years to %v and end months to %v, want 1", sumE, sumY, sumM)
	}
	for i := 1; i < len(out.Sample); i++ {
		if out.Sample[i] < out.Sample[i-1] {
			t.Fatalf("sample not sorted at %d", i)
		}
	}
	return out
}

func within(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s: got %.6f, want %.6f ± %.6f (off by %.6f)", what, got, want, tol, got-want)
	}
}

// A European call: the mean is the Black-Scholes-Merton value and the
// probability of ending in the money is N(d2), the risk-neutral probability
// of exercise. Hull, Options, Futures, and Other Derivatives, worked
// example S=42, K=40, r=0.10, σ=0.20, T=0.5: d2 = 0.6278, call 4.76, so
// N(d2) = 0.7349 (from memory; N(0.6278) checked with math.Erfc below).
func TestOutcomesEuropean(t *testing.T) {
	m := Market{Spot: 42, VolAnnual: 0.2, Curve: FlatCurve(0.10)}
	const n = 40000
	out := simulate(t, []Terms{{Strike: 40, YearsToExpiry: 0.5, European: true}}, []float64{1}, m, OutcomeOptions{Paths: n, Seed: 1})
	const nd2 = 0.7349
	within(t, "N(0.6278) by math.Erfc", 0.5*math.Erfc(-0.6278/math.Sqrt2), nd2, 5e-5)
	within(t, "mean", out.Mean, 4.76, outcomeZMax*out.StdErr+0.005) // 4.76 is rounded to cents
	within(t, "in the money", out.InTheMoney, nd2, outcomeZMax*math.Sqrt(nd2*(1-nd2)/n)+5e-5)
	within(t, "exercised at expiry", out.Endings[EndExpiryExercised], out.InTheMoney, 1e-12)
	if out.ExpectedTermYears != 0.5 || out.Quantile(0) != 0 || out.Quantile(1) <= out.Quantile(0.9) {
		t.Errorf("term %v, quantiles 0: %v, 0.9: %v, 1: %v", out.ExpectedTermYears, out.Quantile(0), out.Quantile(0.9), out.Quantile(1))
	}
	// The median payoff: the 50% quantile of max(S_T − K, 0) discounted,
	// with S_T lognormal, is (m − K)·e^(−rT), m = S·e^((r−σ²/2)T) the median
	// of S_T, when N(d2) > ½. A sample median's standard error is
	// 1/(2·f(m)·√n), f(m) = 1/(m·σ√T·√(2π)) the lognormal density there.
	sT := 0.2 * math.Sqrt(0.5)
	mS := 42 * math.Exp((0.10-0.02)*0.5)
	seMed := mS * sT * math.Sqrt(2*math.Pi) / (2 * math.Sqrt(n)) * math.Exp(-0.05)
	within(t, "median", out.Quantile(0.5), (mS-40)*math.Exp(-0.05), outcomeZMax*seMed)
}

// The employee model: the mean of the simulation is the lattice value
// (both value the same model), and the mean time to the end its expected
// term, for one tranche and for a grant of 48 monthly tranches after a
// one-year cliff.
func TestOutcomesMatchLattice(t *testing.T) {
	curve, err := NewCurve([]CurvePoint{{Tenor: 1, Rate: 0.035}, {Tenor: 10, Rate: 0.042}})
	if err != nil {
		t.Fatal(err)
	}
	m := Market{Spot: 3.4, VolAnnual: 0.52, DividendYield: 0.01, Curve: curve}
	base := Terms{Strike: 3.4, YearsToExpiry: 10, ExerciseMultiple: 2.2, ExitRate: 0.12}
	const n = 40000
	for _, c := range []struct {
		name  string
		vest  []float64
		share []float64
	}{
		{"one tranche vesting in 4 years", []float64{4}, []float64{1}},
		{"48 monthly tranches after a 1-year cliff", monthlyVest(48, 12), nil},
		{"vested at grant", []float64{0}, []float64{1}},
	} {
		w := c.share
		if w == nil {
			w = make([]float64, len(c.vest))
			for i := range w {
				w[i] = 1
			}
			w[0] = 12 // the cliff tranche
		}
		tr := make([]Terms, len(c.vest))
		for i, v := range c.vest {
			tr[i] = base
			tr[i].YearsToVest = v
		}
		lat, err := LatticeTranches(base, c.vest, m, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		var want, wantErr, wantTerm, wantTermErr, wsum float64
		for i, r := range lat {
			want += w[i] * r.Value
			wantErr += w[i] * r.ErrorEstimate
			wantTerm += w[i] * r.ExpectedTermYears
			wantTermErr += w[i] * r.TermError
			wsum += w[i]
		}
		want, wantErr, wantTerm, wantTermErr = want/wsum, wantErr/wsum, wantTerm/wsum, wantTermErr/wsum
		out := simulate(t, tr, w, m, OutcomeOptions{Paths: n, Seed: 7})
		within(t, c.name+": mean", out.Mean, want, outcomeZMax*out.StdErr+wantErr)
		// End times lie in [0, 10], so their standard deviation is at most 5
		// (Popoviciu's inequality) and the mean's standard error at most
		// 5/√n; the barrier's hit time is drawn from the Brownian bridge.
		within(t, c.name+": expected term", out.ExpectedTermYears, wantTerm, outcomeZMax*5/math.Sqrt(n)+wantTermErr)
		if out.Endings[EndMultiple] <= 0 || out.Endings[EndLeftExercised] <= 0 || out.Endings[EndLeftLapsed] <= 0 || out.Endings[EndExpiryLapsed] <= 0 {
			t.Errorf("%s: some way of ending never happens: %v", c.name, out.Endings)
		}
		t.Logf("%s: mean %.4f ± %.4f, lattice %.4f ± %.4f; term %.3f, lattice %.3f; in the money %.3f; endings %.3f",
			c.name, out.Mean, out.StdErr, want, wantErr, out.ExpectedTermYears, wantTerm, out.InTheMoney, out.Endings)
	}
}

// On a grid of one step a year the barrier's hit time still comes from the
// Brownian bridge (bridgeHit), not the middle of the step: the month in
// which the award ends has the distribution it has on a grid of 240 steps
// a year (two samples of the same model, each month within outcomeZMax
// combined standard errors), and the mean and the expected term agree with
// the lattice. With the hit paid at mid-step, 70% of the paths ended in
// the sixth month of a year (all hits fell there); with the bridge, 7%.
func TestOutcomesCoarseGridHitTime(t *testing.T) {
	m := Market{Spot: 10, VolAnnual: 0.4, Curve: FlatCurve(0.12)}
	tm := Terms{Strike: 10, YearsToExpiry: 6, YearsToVest: 0, ExerciseMultiple: 1.6}
	const n = 40000
	lat, err := Lattice(tm, m, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	coarse := simulate(t, []Terms{tm}, []float64{1}, m, OutcomeOptions{Paths: n, StepsPerYear: 1, Seed: 11})
	fine := simulate(t, []Terms{tm}, []float64{1}, m, OutcomeOptions{Paths: n, StepsPerYear: 240, Seed: 12})
	within(t, "mean", coarse.Mean, lat.Value, outcomeZMax*coarse.StdErr+lat.ErrorEstimate)
	// End times in [0, 6]: standard deviation at most 3 (Popoviciu).
	within(t, "expected term", coarse.ExpectedTermYears, lat.ExpectedTermYears, outcomeZMax*3/math.Sqrt(n)+lat.TermError)
	sixth := 0.0
	for k := range coarse.EndMonths {
		pc, pf := coarse.EndMonths[k], fine.EndMonths[k]
		p := (pc + pf) / 2
		within(t, fmt.Sprintf("ending in month %d", k+1), pc, pf, outcomeZMax*math.Sqrt(2*p*(1-p)/n)+1e-12)
		if k%12 == 5 {
			sixth += pc
		}
	}
	t.Logf("mean %.5f ± %.5f, lattice %.5f ± %.2g; term %.4f, lattice %.4f; ended in the sixth month of a year %.3f",
		coarse.Mean, coarse.StdErr, lat.Value, lat.ErrorEstimate, coarse.ExpectedTermYears, lat.ExpectedTermYears, sixth)
}

func monthlyVest(months, cliff int) []float64 {
	var v []float64
	for m := cliff; m <= months; m++ {
		v = append(v, float64(m)/12)
	}
	return v
}

// RSUs: every share is delivered at its vest date (in the money whatever
// the price), and the mean is S0·e^(−qV) weighted by shares.
func TestOutcomesRSU(t *testing.T) {
	m := Market{Spot: 3.4, VolAnnual: 0.52, DividendYield: 0.02, Curve: FlatCurve(0.04)}
	tr := []Terms{{YearsToExpiry: 1, YearsToVest: 1}, {YearsToExpiry: 2, YearsToVest: 2}, {YearsToExpiry: 3, YearsToVest: 3}}
	w := []float64{1, 1, 2}
	out := simulate(t, tr, w, m, OutcomeOptions{Paths: 40000, Seed: 3})
	var want float64
	for i, x := range tr {
		want += w[i] * RSUValue(m, x.YearsToVest).Value / 4
	}
	within(t, "mean", out.Mean, want, outcomeZMax*out.StdErr)
	if out.InTheMoney != 1 || out.Endings[EndExpiryExercised] != 1 {
		t.Errorf("in the money %v, delivered %v; want 1", out.InTheMoney, out.Endings[EndExpiryExercised])
	}
	// A tranche vesting on its anniversary ends in that year.
	if len(out.EndYears) != 3 || out.EndYears[0] != 0.25 || out.EndYears[1] != 0.25 || out.EndYears[2] != 0.5 {
		t.Errorf("end years %v, want [0.25 0.25 0.5]", out.EndYears)
	}
	if len(out.EndMonths) != 36 || out.EndMonths[11] != 0.25 || out.EndMonths[23] != 0.25 || out.EndMonths[35] != 0.5 {
		t.Errorf("end months %v, want a quarter in months 12 and 24 and a half in month 36", out.EndMonths)
	}
	within(t, "expected term", out.ExpectedTermYears, (1+2+2*3)/4.0, 1e-12)
}

// The same seed gives the same numbers; rational exercise and mixed
// barriers are refused.
func TestOutcomesSeedAndRefusals(t *testing.T) {
	m := Market{Spot: 10, VolAnnual: 0.4, Curve: FlatCurve(0.03)}
	tr := []Terms{{Strike: 10, YearsToExpiry: 5, YearsToVest: 1, ExerciseMultiple: 2, ExitRate: 0.1}}
	a := simulate(t, tr, []float64{1}, m, OutcomeOptions{Paths: 2000, Seed: 5})
	b := simulate(t, tr, []float64{1}, m, OutcomeOptions{Paths: 2000, Seed: 5})
	c := simulate(t, tr, []float64{1}, m, OutcomeOptions{Paths: 2000, Seed: 6})
	if a.Mean != b.Mean || a.Quantile(0.9) != b.Quantile(0.9) || a.Mean == c.Mean {
		t.Errorf("seed 5 twice: %v %v; seed 6: %v", a.Mean, b.Mean, c.Mean)
	}
	for _, bad := range [][]Terms{
		{{Strike: 10, YearsToExpiry: 5, YearsToVest: 1, Rational: true}},
		{{Strike: 10, YearsToExpiry: 5, ExerciseMultiple: 2}, {Strike: 11, YearsToExpiry: 5, ExerciseMultiple: 2}},
	} {
		w := make([]float64, len(bad))
		for i := range w {
			w[i] = 1
		}
		if _, err := SimulateOutcomes(bad, w, m, OutcomeOptions{Paths: 100}); err == nil {
			t.Errorf("%+v: no error", bad)
		}
	}
}

// BenchmarkOutcomes simulates a four-year grant of 37 tranches (a one-year
// cliff, then monthly) over a ten-year term.
func BenchmarkOutcomes(b *testing.B) {
	m := Market{Spot: 3.4, VolAnnual: 0.52, Curve: FlatCurve(0.04)}
	vest := monthlyVest(48, 12)
	tr := make([]Terms, len(vest))
	w := make([]float64, len(vest))
	for i, v := range vest {
		tr[i] = Terms{Strike: 3.4, YearsToExpiry: 10, YearsToVest: v, ExerciseMultiple: 2.2, ExitRate: 0.12}
		w[i] = 1
	}
	const paths = 2000
	b.ReportAllocs()
	for b.Loop() {
		if _, err := SimulateOutcomes(tr, w, m, OutcomeOptions{Paths: paths, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*paths), "ns/path")
}
