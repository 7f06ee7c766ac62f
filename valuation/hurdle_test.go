package valuation

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

// Haug, The Complete Guide to Option Pricing Formulas (2nd ed., 2007),
// Table 4-13, standard barrier options: S = 100, T = 0.5, r = 0.08,
// b = 0.04 (q = 0.04), rebate 3 paid at expiry if the barrier is never
// reached. Up-and-in calls, barrier 105, at σ = 0.25 and 0.30. The
// σ = 0.30, strike 90 value (15.2098) and the down-and-out row used as a
// control below are recalled from memory; the others were read from
// QuantLib 1.29's AnalyticBarrierEngine at T = 0.5 exactly (Actual/360,
// 180 days), which reproduces the recalled ones to the table's four
// decimals.
func TestUpAndInCallHaugTable(t *testing.T) {
	const tol = 5e-5 // the table's rounding
	rows := []struct {
		K, vol, want float64
	}{
		{90, 0.25, 14.1112}, {90, 0.30, 15.2098},
		{100, 0.25, 8.4482}, {100, 0.30, 9.7278},
		{110, 0.25, 4.5910}, {110, 0.30, 5.8350},
	}
	for _, r := range rows {
		in := BSMInputs{Spot: 100, Strike: r.K, Years: 0.5, Rate: 0.08, DividendYield: 0.04, Vol: r.vol}
		if got := UpAndInCall(in, 105, 3); math.Abs(got-r.want) > tol {
			t.Errorf("up-and-in call K=%v σ=%v H=105 rebate 3: got %.6f, want %.4f (Haug Table 4-13), diff %.2g > %g", r.K, r.vol, got, r.want, got-r.want, tol)
		}
	}
	// In-out parity: up-and-in plus up-and-out is the plain call; with no
	// rebate the in value alone is below the call and above zero.
	in := BSMInputs{Spot: 100, Strike: 100, Years: 0.5, Rate: 0.08, DividendYield: 0.04, Vol: 0.25}
	if c, ui := BSMCall(in), UpAndInCall(in, 105, 0); !(ui > 0 && ui < c) {
		t.Errorf("up-and-in %v not inside (0, call %v)", ui, c)
	}
	if c, ui := BSMCall(in), UpAndInCall(in, 100, 0); math.Abs(c-ui) > 1e-12 {
		t.Errorf("barrier at the spot: up-and-in %v, want the call %v", ui, c)
	}
}

type qlBarrier struct {
	Spot, Strike, Barrier, Years, Rate float64
	DividendYield                      float64 `json:"dividend_yield"`
	Vol, Analytic, Binomial            float64
}

type qlExchange struct {
	S1, S2, Years, Rate, Q1, Q2, Vol1, Vol2, Correlation, Value float64
}

// loadBarrierRefs reads the values of testdata/quantlib_barrier_gen.py
// (QuantLib 1.29, Debian quantlib-python), committed so that the tests need
// no Python.
func loadBarrierRefs(t *testing.T) ([]qlBarrier, []qlExchange) {
	b, err := os.ReadFile("testdata/quantlib_barrier.json")
	if err != nil {
		t.Fatalf("QuantLib barrier values missing (run testdata/quantlib_barrier_gen.py): %v", err)
	}
	var f struct {
		QuantLib string       `json:"quantlib"`
		UpAndIn  []qlBarrier  `json:"up_and_in"`
		Exchange []qlExchange `json:"exchange"`
	}
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatal(err)
	}
	if f.QuantLib != "1.29" || len(f.UpAndIn) < 8 || len(f.Exchange) < 4 {
		t.Fatalf("QuantLib barrier file: version %q, %d barrier and %d exchange cases", f.QuantLib, len(f.UpAndIn), len(f.Exchange))
	}
	return f.UpAndIn, f.Exchange
}

// The flag contract (`price --hurdle H --european --hurdle-monitoring
// continuous`): the hurdle lattice of a European call is the up-and-in call
// of Reiner and Rubinstein (1991), no rebate. Against QuantLib's
// AnalyticBarrierEngine: the closed form to 1e-10, the lattice within its
// error estimate and within AutoTarget (0.05%), QuantLib's own CRR barrier
// lattice (4000 steps) within 0.05%, and a small seeded simulation within
// four standard errors.
func TestHurdleQuantLibUpAndIn(t *testing.T) {
	refs, _ := loadBarrierRefs(t)
	for i, c := range refs {
		in := BSMInputs{Spot: c.Spot, Strike: c.Strike, Years: c.Years, Rate: c.Rate, DividendYield: c.DividendYield, Vol: c.Vol}
		cf := UpAndInCall(in, c.Barrier, 0)
		if math.Abs(cf-c.Analytic) > 1e-10*c.Analytic {
			t.Errorf("case %d %+v: closed form %.12f, QuantLib analytic %.12f", i, c, cf, c.Analytic)
		}
		if math.Abs(c.Binomial-c.Analytic) > AutoTarget*c.Analytic {
			t.Errorf("case %d: QuantLib's CRR lattice %.6f is not within 0.05%% of its closed form %.6f", i, c.Binomial, c.Analytic)
		}
		m := Market{Spot: c.Spot, VolAnnual: c.Vol, DividendYield: c.DividendYield, Curve: FlatCurve(c.Rate)}
		a := HurdleAward{Terms: Terms{Strike: c.Strike, YearsToExpiry: c.Years, European: true}, VestYears: []float64{0},
			Hurdle: Hurdle{Price: c.Barrier, Monitoring: MonitorContinuous}}
		lat, err := HurdleLattice(a, m)
		if err != nil {
			t.Fatal(err)
		}
		e := math.Abs(lat[0].Value - c.Analytic)
		if e > lat[0].ErrorEstimate || e > AutoTarget*c.Analytic {
			t.Errorf("case %d %+v: lattice %.7f ± %.2g, QuantLib %.7f: error %.2g (%.3g%%)", i, c, lat[0].Value, lat[0].ErrorEstimate, c.Analytic, e, 100*e/c.Analytic)
		}
		if i%3 == 0 {
			sim, err := HurdleSim(a, m, SimOptions{Seed: uint64(10 + i), TargetRelSE: 0.01, MaxPaths: 64 * SimBlockPaths})
			if err != nil {
				t.Fatal(err)
			}
			if z := (sim.Tranches[0].Value - c.Analytic) / sim.Tranches[0].ErrorEstimate; math.Abs(z) > 4 {
				t.Errorf("case %d: simulation %.5f ± %.5f against QuantLib %.5f: z = %.1f", i, sim.Tranches[0].Value, sim.Tranches[0].ErrorEstimate, c.Analytic, z)
			}
		}
	}
}

// Employee options and units with a continuous hurdle: the lattice and the
// simulation, independent methods of the same model, agree within their
// combined error (four combined standard deviations).
func TestHurdleLatticeAgainstSimulation(t *testing.T) {
	m := Market{Spot: 10, VolAnnual: 0.3, DividendYield: 0.01, Curve: FlatCurve(0.04)}
	cases := []struct {
		name string
		a    HurdleAward
	}{
		{"option, multiple and exits, deadline 4y", HurdleAward{Terms: Terms{Strike: 10, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.1},
			VestYears: []float64{1, 3}, Hurdle: Hurdle{Price: 13, YearsToDeadline: 4, Monitoring: MonitorContinuous}}},
		{"option, hurdle above the multiple", HurdleAward{Terms: Terms{Strike: 10, YearsToExpiry: 7, ExerciseMultiple: 1.5, ExitRate: 0.05},
			VestYears: []float64{2}, Hurdle: Hurdle{Price: 16, Monitoring: MonitorContinuous}}},
		{"option, vests after the deadline", HurdleAward{Terms: Terms{Strike: 10, YearsToExpiry: 10, ExerciseMultiple: 3},
			VestYears: []float64{4}, Hurdle: Hurdle{Price: 14, YearsToDeadline: 2, Monitoring: MonitorContinuous}}},
		{"units", HurdleAward{Terms: Terms{YearsToExpiry: 3}, Units: true,
			VestYears: []float64{1, 2, 3}, Hurdle: Hurdle{Price: 15, YearsToDeadline: 3, Monitoring: MonitorContinuous}}},
	}
	for i, c := range cases {
		lat, err := HurdleLattice(c.a, m)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		sim, err := HurdleSim(c.a, m, SimOptions{Seed: uint64(20 + i), TargetRelSE: 0.004, MaxPaths: 128 * SimBlockPaths})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		for k := range lat {
			l, s := lat[k], sim.Tranches[k]
			if z := (s.Value - l.Value) / math.Hypot(s.ErrorEstimate, l.ErrorEstimate); math.Abs(z) > 4 {
				t.Errorf("%s tranche %d: lattice %.5f ± %.5f, simulation %.5f ± %.5f: z = %.1f", c.name, k, l.Value, l.ErrorEstimate, s.Value, s.ErrorEstimate, z)
			}
			if l.MissedTarget {
				t.Errorf("%s tranche %d: lattice missed its target: ± %.2g on %.5f", c.name, k, l.ErrorEstimate, l.Value)
			}
			if z := (s.ExpectedTermYears - l.ExpectedTermYears) / math.Hypot(s.TermError, l.TermError+1e-3); math.Abs(z) > 4 {
				t.Errorf("%s tranche %d: expected term lattice %.4f, simulation %.4f ± %.4f", c.name, k, l.ExpectedTermYears, s.ExpectedTermYears, s.TermError)
			}
		}
	}
}

// Daily monitoring: the lattice's continuity correction (Broadie,
// Glasserman and Kou 1997) against exact daily simulation, within the
// combined error (the lattice's includes DailyCorrectionTolerance). The
// cases are a sample of the 30 tranches the tolerance was set from.
func TestDailyHurdleCorrection(t *testing.T) {
	m := Market{Spot: 10, VolAnnual: 0.3, DividendYield: 0.01, Curve: FlatCurve(0.04)}
	cases := []HurdleAward{
		{Terms: Terms{Strike: 10, YearsToExpiry: 1, European: true}, VestYears: []float64{0}, Hurdle: Hurdle{Price: 20}},
		{Terms: Terms{Strike: 10, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.1}, VestYears: []float64{1}, Hurdle: Hurdle{Price: 13, YearsToDeadline: 4}},
		{Terms: Terms{YearsToExpiry: 3}, Units: true, VestYears: []float64{3}, Hurdle: Hurdle{Price: 11, YearsToDeadline: 3}},
	}
	for i, a := range cases {
		lat, err := HurdleLattice(a, m)
		if err != nil {
			t.Fatal(err)
		}
		sim, err := HurdleSim(a, m, SimOptions{Seed: uint64(40 + i), TargetRelSE: 0.004, MaxPaths: 64 * SimBlockPaths})
		if err != nil {
			t.Fatal(err)
		}
		l, s := lat[0], sim.Tranches[0]
		if l.ErrorEstimate < DailyCorrectionTolerance*l.Value {
			t.Errorf("case %d: daily error estimate %.3g below the correction's tolerance", i, l.ErrorEstimate)
		}
		if d := math.Abs(s.Value - l.Value); d > 2*s.ErrorEstimate+l.ErrorEstimate {
			t.Errorf("case %d: daily lattice %.5f ± %.5f, exact daily simulation %.5f ± %.5f", i, l.Value, l.ErrorEstimate, s.Value, s.ErrorEstimate)
		}
	}
}

// The time to reach a level b = ln(H/S0) > 0 of Brownian motion with drift
// ν and volatility σ is inverse Gaussian with mean b/ν and shape b²/σ²
// (the first-passage law; e.g. Karatzas and Shreve, Brownian Motion and
// Stochastic Calculus, §3.5.C, or Chhikara and Folks, The Inverse Gaussian
// Distribution, 1989): P(τ ≤ t) = Φ(√(λ/t)(t/μ − 1)) + e^(2λ/μ)·Φ(−√(λ/t)(t/μ + 1)).
// The simulation's probability of meeting a continuous hurdle by the
// deadline, and the median time to meet it (the derived service period of
// units vesting at once), against it; and the lattice's units value
// against E[S_τ·P(0, τ); τ ≤ D] = H·E[e^(−rτ)] integrated with that law.
func TestHurdleFirstPassage(t *testing.T) {
	const S0, H, r, q, sig, D = 10.0, 14.0, 0.05, 0.0, 0.35, 3.0
	m := Market{Spot: S0, VolAnnual: sig, DividendYield: q, Curve: FlatCurve(r)}
	b := math.Log(H / S0)
	nu := r - q - sig*sig/2
	mu, lam := b/nu, b*b/(sig*sig)
	cdf := func(t float64) float64 {
		s := math.Sqrt(lam / t)
		return stdNormCDF(s*(t/mu-1)) + math.Exp(2*lam/mu)*stdNormCDF(-s*(t/mu+1))
	}
	pD := cdf(D)
	lo, hi := 0.0, D
	for range 200 {
		mid := (lo + hi) / 2
		if cdf(mid) < pD/2 {
			lo = mid
		} else {
			hi = mid
		}
	}
	median := lo
	// E[e^(−rτ); τ ≤ D] by the midpoint rule on the law's density.
	var lt float64
	const n = 200000
	for i := range n {
		t := D * (float64(i) + 0.5) / n
		dens := b / (sig * math.Sqrt(2*math.Pi*t*t*t)) * math.Exp(-(b-nu*t)*(b-nu*t)/(2*sig*sig*t))
		lt += math.Exp(-r*t) * dens * D / n
	}
	want := H * lt
	a := HurdleAward{Terms: Terms{YearsToExpiry: D}, Units: true, VestYears: []float64{0}, Hurdle: Hurdle{Price: H, YearsToDeadline: D, Monitoring: MonitorContinuous}}
	lat, err := HurdleLattice(a, m)
	if err != nil {
		t.Fatal(err)
	}
	if e := math.Abs(lat[0].Value - want); e > lat[0].ErrorEstimate || e > AutoTarget*want {
		t.Errorf("units on a continuous hurdle: lattice %.6f ± %.2g, first-passage law %.6f", lat[0].Value, lat[0].ErrorEstimate, want)
	}
	sim, err := HurdleSim(a, m, SimOptions{Seed: 5, MinPaths: 64 * SimBlockPaths, MaxPaths: 64 * SimBlockPaths})
	if err != nil {
		t.Fatal(err)
	}
	np := float64(sim.Paths)
	if se := math.Sqrt(pD * (1 - pD) / np); math.Abs(sim.HitProbability-pD) > 4*se {
		t.Errorf("probability of meeting the hurdle by %v years: simulated %.4f, first-passage law %.4f (± %.4f)", D, sim.HitProbability, pD, se)
	}
	// The median of the hits: its sampling error is about
	// √(1/4/hits)/f(median) with f the conditional density; the
	// histogram is by day.
	f := (cdf(median+1e-4) - cdf(median-1e-4)) / 2e-4 / pD
	tol := 4*math.Sqrt(0.25/(np*pD))/f + 1.0/365
	if math.Abs(sim.MedianHitYears-median) > tol || math.Abs(sim.DerivedServiceYears[0]-median) > tol {
		t.Errorf("median time to meet: simulated %.4f (derived service %.4f), first-passage law %.4f (tolerance %.4f)", sim.MedianHitYears, sim.DerivedServiceYears[0], median, tol)
	}
	var mass float64
	for _, x := range sim.HitMonths {
		mass += x
	}
	if math.Abs(mass-sim.HitProbability) > 1e-12 || len(sim.HitMonths) != 36 {
		t.Errorf("hitting-time distribution: %d months adding up to %v, want 36 adding up to %v", len(sim.HitMonths), mass, sim.HitProbability)
	}
}

// Limits that must hold: a hurdle met at the measurement date leaves the
// plain award; the value falls as the hurdle rises and stays below the
// plain award; a hurdle far out of reach is worth next to nothing; daily
// monitoring is worth less than continuous (fewer chances to meet it).
func TestHurdleLimits(t *testing.T) {
	m := Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0, Curve: FlatCurve(0.04)}
	terms := Terms{Strike: 12, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.08}
	vest := []float64{1, 2, 3, 4}
	plain, err := LatticeTranches(terms, vest, m, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	met, err := HurdleLattice(HurdleAward{Terms: terms, VestYears: vest, Hurdle: Hurdle{Price: 12}}, m)
	if err != nil {
		t.Fatal(err)
	}
	for k := range plain {
		if met[k] != plain[k] {
			t.Errorf("tranche %d: hurdle at the spot %+v, want the plain award %+v", k, met[k], plain[k])
		}
	}
	prev := plain
	for _, h := range []float64{14, 18, 24, 36} {
		for _, mon := range []Monitoring{MonitorContinuous, MonitorDaily} {
			got, err := HurdleLattice(HurdleAward{Terms: terms, VestYears: vest, Hurdle: Hurdle{Price: h, YearsToDeadline: 5, Monitoring: mon}}, m)
			if err != nil {
				t.Fatal(err)
			}
			for k := range got {
				if !(got[k].Value < prev[k].Value) {
					t.Errorf("hurdle %v %v tranche %d: %.5f not below %.5f", h, mon, k, got[k].Value, prev[k].Value)
				}
			}
			prev = got
		}
	}
	far, err := HurdleLattice(HurdleAward{Terms: terms, VestYears: vest, Hurdle: Hurdle{Price: 12000, YearsToDeadline: 1}}, m)
	if err != nil {
		t.Fatal(err)
	}
	if far[0].Value > 1e-6 {
		t.Errorf("a hurdle 1000 times the spot within a year: %v, want about 0", far[0].Value)
	}
	if _, err := HurdleLattice(HurdleAward{Terms: terms, VestYears: vest, Hurdle: Hurdle{Price: 18, AverageDays: 20}}, m); err == nil {
		t.Error("an average hurdle on the lattice: want an error pointing to the simulation")
	}
}

// The simulation gives the same numbers on one core and on several.
func TestHurdleSimReproducible(t *testing.T) {
	m := Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0.01, Curve: FlatCurve(0.04)}
	a := HurdleAward{Terms: Terms{Strike: 12, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.08}, VestYears: []float64{1, 4},
		Hurdle: Hurdle{Price: 18, YearsToDeadline: 4, AverageDays: 20}}
	o := SimOptions{Seed: 9, MinPaths: 4 * SimBlockPaths, MaxPaths: 4 * SimBlockPaths}
	o.Workers = 1
	one, err := HurdleSim(a, m, o)
	if err != nil {
		t.Fatal(err)
	}
	o.Workers = 3
	three, err := HurdleSim(a, m, o)
	if err != nil {
		t.Fatal(err)
	}
	for k := range one.Tranches {
		if one.Tranches[k] != three.Tranches[k] {
			t.Errorf("tranche %d: one worker %+v, three %+v", k, one.Tranches[k], three.Tranches[k])
		}
	}
	if one.MedianHitYears != three.MedianHitYears || one.HitProbability != three.HitProbability {
		t.Errorf("hit statistics differ: %v/%v and %v/%v", one.MedianHitYears, one.HitProbability, three.MedianHitYears, three.HitProbability)
	}
}

// A sweep of random European up-and-in calls against the closed form
// (Reiner and Rubinstein 1991): every lattice value within AutoTarget, and
// its error estimate covering the actual error in at least 95% of cases
// (DESIGN §5).
func TestHurdleLatticeSweep(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	const n = 40
	covered := 0
	for i := range n {
		S := 10 + 90*rng.Float64()
		K := S * (0.6 + 0.9*rng.Float64())
		H := S * (1.02 + 1.5*rng.Float64())
		T := 0.25 + 9.75*rng.Float64()
		r, q, vol := 0.06*rng.Float64(), 0.04*rng.Float64(), 0.15+0.6*rng.Float64()
		in := BSMInputs{Spot: S, Strike: K, Years: T, Rate: r, DividendYield: q, Vol: vol}
		want := UpAndInCall(in, H, 0)
		got, err := HurdleLattice(HurdleAward{Terms: Terms{Strike: K, YearsToExpiry: T, European: true}, VestYears: []float64{0},
			Hurdle: Hurdle{Price: H, Monitoring: MonitorContinuous}}, Market{Spot: S, VolAnnual: vol, DividendYield: q, Curve: FlatCurve(r)})
		if err != nil {
			t.Fatal(err)
		}
		e := math.Abs(got[0].Value - want)
		if e <= got[0].ErrorEstimate {
			covered++
		}
		if e > AutoTarget*want && want > 1e-3*S {
			t.Errorf("case %d %+v H=%v: lattice %.6f ± %.2g, closed form %.6f (%.3g%%)", i, in, H, got[0].Value, got[0].ErrorEstimate, want, 100*e/want)
		}
	}
	if covered < n*95/100 {
		t.Errorf("the error estimate covered %d of %d cases, want at least 95%%", covered, n)
	}
}
