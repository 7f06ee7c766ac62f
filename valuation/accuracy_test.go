package valuation

import (
	"flag"
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// employeeCases spread the inputs an option ledger meets: short and long
// terms, early and late vesting, multiples near and far, exits, dividends,
// rational exercise, barrier below the spot, an upward-sloping curve.
func employeeCases(t *testing.T) []struct {
	tm Terms
	mk Market
} {
	curve := testCurve(t)
	flat := FlatCurve(0.04)
	return []struct {
		tm Terms
		mk Market
	}{
		{Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08}, Market{Spot: 12, VolAnnual: 0.55, Curve: flat}},
		{Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.1}, Market{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)}},
		{Terms{Strike: 20, YearsToExpiry: 7, YearsToVest: 1.37, ExerciseMultiple: 2, ExitRate: 0.15}, Market{Spot: 18, VolAnnual: 0.4, DividendYield: 0.01, Curve: curve}},
		{Terms{Strike: 30, YearsToExpiry: 5, YearsToVest: 0, ExerciseMultiple: 1.8, ExitRate: 0.05}, Market{Spot: 33, VolAnnual: 0.3, Curve: curve}},
		{Terms{Strike: 8, YearsToExpiry: 10, YearsToVest: 2.25, ExerciseMultiple: 4, ExitRate: 0.2}, Market{Spot: 10, VolAnnual: 0.7, Curve: flat}},
		{Terms{Strike: 10, YearsToExpiry: 6, YearsToVest: 1, ExerciseMultiple: 1.5, ExitRate: 0.0}, Market{Spot: 12, VolAnnual: 0.25, DividendYield: 0.03, Curve: flat}},
		{Terms{Strike: 40, YearsToExpiry: 10, YearsToVest: 4.1, ExitRate: 0.1, Rational: true}, Market{Spot: 40, VolAnnual: 0.3, DividendYield: 0.04, Curve: flat}},
		{Terms{Strike: 40, YearsToExpiry: 8, YearsToVest: 2, ExerciseMultiple: 2.2, ExitRate: 0.06, Rational: true}, Market{Spot: 45, VolAnnual: 0.35, DividendYield: 0.05, Curve: curve}},
		{Terms{Strike: 5, YearsToExpiry: 10, YearsToVest: 0.5, ExerciseMultiple: 1.3, ExitRate: 0.1}, Market{Spot: 6, VolAnnual: 0.5, Curve: flat}}, // barrier just above the spot
		{Terms{Strike: 5, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 1.5, ExitRate: 0.1}, Market{Spot: 9, VolAnnual: 0.5, Curve: flat}},   // barrier below the spot
		{Terms{Strike: 15, YearsToExpiry: 3, YearsToVest: 1, ExerciseMultiple: 2, ExitRate: 0.3}, Market{Spot: 14, VolAnnual: 0.6, Curve: flat}},
		{Terms{Strike: 25, YearsToExpiry: 10, YearsToVest: 3.9, ExerciseMultiple: 2.8, ExitRate: 0.12}, Market{Spot: 22, VolAnnual: 0.45, DividendYield: 0.015, Curve: curve}},
	}
}

// randomEmployeeCases draws n cases from a seeded source over the ranges a
// ledger meets: moneyness 0.6–1.6, terms 2–10 years, vesting up to 60% of
// the term (a fifth vested now), a multiple of 1.2–4 (none in a sixth),
// exits up to 30%, dividends up to 5%, volatility 20–80%, rates up to 6%.
func randomEmployeeCases(n int, seed uint64) []struct {
	tm Terms
	mk Market
} {
	rng := rand.New(rand.NewPCG(seed, seed+1))
	out := make([]struct {
		tm Terms
		mk Market
	}, n)
	for i := range out {
		K := 10.0
		S := K * (0.6 + rng.Float64())
		T := 2 + 8*rng.Float64()
		V := T * 0.6 * rng.Float64()
		if rng.IntN(5) == 0 {
			V = 0
		}
		M := 0.0
		if rng.IntN(6) != 0 {
			M = 1.2 + 2.8*rng.Float64()
		}
		e, q, vol, r := 0.3*rng.Float64(), 0.05*rng.Float64(), 0.2+0.6*rng.Float64(), 0.06*rng.Float64()
		out[i].tm = Terms{Strike: K, YearsToExpiry: T, YearsToVest: V, ExerciseMultiple: M, ExitRate: e}
		out[i].mk = Market{Spot: S, VolAnnual: vol, DividendYield: q, Curve: FlatCurve(r)}
	}
	return out
}

// barrierCase is a case of the region where the exercise multiple's barrier
// stands near the spot, labelled by its vesting.
type barrierCase struct {
	region string
	tm     Terms
	mk     Market
}

// barrierVests are the vestings of the barrier region: vested now, a day,
// a week and a month away.
var barrierVests = []struct {
	name  string
	years float64
}{{"vested", 0}, {"a day", 1.0 / 365}, {"a week", 7.0 / 365}, {"a month", 1.0 / 12}}

// barrierCases draws n cases per vesting of the region that issue 11 found
// failing: the barrier M·K within two node spacings of a 1200-step tree
// (σ√(T/1200)) of the spot, above or below it (a quarter of them just
// below); multiples 1.02 to 2; exit rates 0 to 0.3 (none in a fifth);
// terms of 10 years (3 to 10 in a third); volatility 20–80%, rates up to
// 4%, dividends up to 4% in a third.
func barrierCases(n int, seed uint64) []barrierCase {
	rng := rand.New(rand.NewPCG(seed, seed+7))
	var out []barrierCase
	for _, v := range barrierVests {
		for range n {
			K := 100.0
			M := 1.02 + 0.98*rng.Float64()
			T := 10.0
			if rng.IntN(3) == 0 {
				T = 3 + 7*rng.Float64()
			}
			vol := 0.2 + 0.6*rng.Float64()
			h := vol * math.Sqrt(T/1200)
			S := M * K * math.Exp(-h*(4*rng.Float64()-2))
			if rng.IntN(4) == 0 {
				S = M * K * math.Exp(-2*h*rng.Float64())
			}
			e := 0.3 * rng.Float64()
			if rng.IntN(5) == 0 {
				e = 0
			}
			q := 0.0
			if rng.IntN(3) == 0 {
				q = 0.04 * rng.Float64()
			}
			out = append(out, barrierCase{v.name,
				Terms{Strike: K, YearsToExpiry: T, YearsToVest: v.years, ExerciseMultiple: M, ExitRate: e},
				Market{Spot: S, VolAnnual: vol, DividendYield: q, Curve: FlatCurve(0.04 * rng.Float64())}})
		}
	}
	return out
}

// fdReference is the Crank-Nicolson reference: fdEmployeeLife on two grids
// (nx and 2nx space steps per unit of log price, nt and 2nt time steps a
// year), extrapolated for an error in h².
func fdReference(tm Terms, mk Market, nx, nt int) (value, life float64) {
	f1, l1 := fdEmployeeLife(tm, mk, nx, nt)
	f2, l2 := fdEmployeeLife(tm, mk, 2*nx, 2*nt)
	return f2 + (f2-f1)/3, l2 + (l2-l1)/3
}

// coverage counts, per region, the cases whose error the estimate covers.
type coverage map[string][2]int

func (c coverage) add(region string, covered bool) {
	n := c[region]
	n[1]++
	if covered {
		n[0]++
	}
	c[region] = n
}

// check fails t for any region below 95% (perRegion), or for all of them
// together below 95%.
func (c coverage) check(t *testing.T, perRegion bool) {
	t.Helper()
	var all [2]int
	for region, n := range c {
		t.Logf("%s: error estimate covers %d of %d", region, n[0], n[1])
		if perRegion && float64(n[0]) < 0.95*float64(n[1]) {
			t.Errorf("%s: error estimate covers the error in %d of %d cases, want at least 95%%", region, n[0], n[1])
		}
		all[0] += n[0]
		all[1] += n[1]
	}
	if float64(all[0]) < 0.95*float64(all[1]) {
		t.Errorf("error estimate covers the error in %d of %d cases, want at least 95%%", all[0], all[1])
	}
}

// The barrier near the spot with vesting days away (issue 11): auto mode
// within 0.05% of the Crank-Nicolson reference (120 and 240 space steps
// per unit of log price, 60 and 120 steps a year, at least 30 before the
// vest date), and the error estimate covering the error in at least 95% of
// the cases (5 per vesting here; go test -run AutoSweep -lattice.sweep N
// runs N per vesting and counts the coverage of each vesting apart).
func TestLatticeAutoBarrierNearSpot(t *testing.T) {
	cov := coverage{}
	for _, c := range barrierCases(5, 11) {
		checkBarrierCase(t, c, 120, 60, cov)
	}
	cov.check(t, false)
}

func checkBarrierCase(t *testing.T, c barrierCase, nx, nt int, cov coverage) float64 {
	t.Helper()
	ref, lifeRef := fdReference(c.tm, c.mk, nx, nt)
	got, err := Lattice(c.tm, c.mk, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	e := math.Abs(got.Value - ref)
	cov.add(c.region, e <= got.ErrorEstimate)
	if e > AutoTarget*ref || got.MissedTarget {
		t.Errorf("%s: terms %+v spot %v vol %v q %v r %v: auto %.6f ± %.2g (missed target %v), FD %.6f, rel err %.2g",
			c.region, c.tm, c.mk.Spot, c.mk.VolAnnual, c.mk.DividendYield, c.mk.Curve.Zero(1), got.Value, got.ErrorEstimate, got.MissedTarget, ref, e/ref)
	}
	// The expected term within 2e-3 years of the reference, or within its
	// own error estimate where that is larger (the life jumps at the
	// barrier, which a vest date a day away leaves barely smoothed).
	if d := math.Abs(got.ExpectedTermYears - lifeRef); d > math.Max(2e-3, got.TermError) {
		t.Errorf("%s: terms %+v spot %v: expected term %.5f ± %.2g, FD %.5f", c.region, c.tm, c.mk.Spot, got.ExpectedTermYears, got.TermError, lifeRef)
	}
	return e / ref
}

// Issue 11's failing cases, with the audit's reference values (a
// Richardson-extrapolated Crank-Nicolson solver and an exact-event Monte
// Carlo; the American call also QuantLib's finite differences, 2.00018),
// which fdReference confirms for the four barrier cases. The barrier cases
// must be within 0.05% with an estimate that covers the error. The American
// call with its exercise boundary 0.14 standard deviations from the spot
// converges too slowly for the lattice's step limit: its estimate must
// cover the error and say so (MissedTarget).
func TestLatticeAutoIssue11Cases(t *testing.T) {
	flat := FlatCurve(0.04)
	for _, c := range []struct {
		tm   Terms
		mk   Market
		want float64
	}{
		{Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 0.01, ExerciseMultiple: 1.05, ExitRate: 0.08}, Market{Spot: 100, VolAnnual: 0.5, Curve: flat}, 5.0935},
		{Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 0.02, ExerciseMultiple: 1.018, ExitRate: 0.3}, Market{Spot: 80, VolAnnual: 0.8, Curve: flat}, 1.28289},
		{Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 0.01, ExerciseMultiple: 2, ExitRate: 0.08}, Market{Spot: 180, VolAnnual: 0.5, Curve: flat}, 87.6336},
		{Terms{Strike: 100, YearsToExpiry: 10, ExerciseMultiple: 1.05, ExitRate: 0.08}, Market{Spot: 100, VolAnnual: 0.5, Curve: flat}, 4.6673},
		{Terms{Strike: 100, YearsToExpiry: 15, Rational: true}, Market{Spot: 100, VolAnnual: 0.1, DividendYield: 0.08, Curve: FlatCurve(-0.01)}, 2.00018},
	} {
		got, err := Lattice(c.tm, c.mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		// the audit's values carry 5 or 6 significant digits
		e := math.Abs(got.Value-c.want) - 0.5e-4*math.Pow(10, math.Floor(math.Log10(c.want))-1)
		t.Logf("terms %+v spot %v: auto %.6f ± %.2g (steps %d, missed target %v), audit %v, rel err %.2g", c.tm, c.mk.Spot, got.Value, got.ErrorEstimate, got.Steps, got.MissedTarget, c.want, e/c.want)
		if e > got.ErrorEstimate {
			t.Errorf("terms %+v spot %v: auto %.6f ± %.2g does not cover the audit's %v", c.tm, c.mk.Spot, got.Value, got.ErrorEstimate, c.want)
		}
		if c.tm.Rational {
			if !got.MissedTarget {
				t.Errorf("American call: estimate %.2g within the target, want it flagged", got.ErrorEstimate)
			}
			continue
		}
		if e > AutoTarget*c.want || got.MissedTarget {
			t.Errorf("terms %+v spot %v: auto %.6f ± %.2g (missed target %v), audit %v, rel err %.2g, tol %g", c.tm, c.mk.Spot, got.Value, got.ErrorEstimate, got.MissedTarget, c.want, e/c.want, AutoTarget)
		}
	}
}

// Auto mode against the Crank-Nicolson reference (fdEmployee at 120 and 240
// space steps per unit of log price, Richardson over the two grids; the
// reference's own error is below about 1e-5 relative): within 0.05%
// (DESIGN §5), and the error estimate covers the actual error in at least
// 95% of the cases, on fixed and seeded random cases.
func TestLatticeAutoEmployeeAccuracy(t *testing.T) {
	const tol = 5e-4
	covered, total := 0, 0
	cases := append(employeeCases(t), randomEmployeeCases(12, 7)...)
	for _, c := range cases {
		f1, l1 := fdEmployeeLife(c.tm, c.mk, 120, 60)
		f2, l2 := fdEmployeeLife(c.tm, c.mk, 240, 120)
		ref := f2 + (f2-f1)/3
		lifeRef := l2 + (l2-l1)/3
		got, err := Lattice(c.tm, c.mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		e := math.Abs(got.Value - ref)
		total++
		if e <= got.ErrorEstimate {
			covered++
		}
		t.Logf("terms %+v spot %v vol %v q %v: auto %.6f ± %.2g (steps %d), FD %.6f (grids %.6f %.6f), rel err %.2g", c.tm, c.mk.Spot, c.mk.VolAnnual, c.mk.DividendYield, got.Value, got.ErrorEstimate, got.Steps, ref, f1, f2, e/ref)
		if e > tol*ref {
			t.Errorf("terms %+v market %+v: auto %.6f ± %.2g, FD reference %.6f, rel err %.2g, tol %g", c.tm, c.mk, got.Value, got.ErrorEstimate, ref, e/ref, tol)
		}
		// Expected term against the FD expected-life equation: 2e-3 years;
		// 0.02 years under rational exercise, where the life jumps across
		// the exercise boundary and neither method converges smoothly.
		lifeTol := 2e-3
		if c.tm.Rational {
			lifeTol = 0.02
		}
		if d := math.Abs(got.ExpectedTermYears - lifeRef); d > lifeTol {
			t.Errorf("terms %+v market %+v: expected term %.5f, FD %.5f, diff %.2g years, tol %g", c.tm, c.mk, got.ExpectedTermYears, lifeRef, d, lifeTol)
		}
	}
	if float64(covered) < 0.95*float64(total) {
		t.Errorf("error estimate covers the error in %d of %d cases, want at least 95%%", covered, total)
	}
}

var sweepCases = flag.Int("lattice.sweep", 0, "run the auto-mode accuracy sweep over this many random cases (slow; for the issue note)")

// TestLatticeAutoSweep is the long form of the accuracy test, for the
// figures in the issue note: go test -run AutoSweep -lattice.sweep 160.
func TestLatticeAutoSweep(t *testing.T) {
	if *sweepCases == 0 {
		t.Skip("enable with -lattice.sweep N")
	}
	const tol = 5e-4
	var rels []float64
	covered := 0
	for seed := uint64(1); seed <= 3; seed += 2 {
		for _, c := range randomEmployeeCases(*sweepCases, seed) {
			f1 := fdEmployee(c.tm, c.mk, 200, 100)
			f2 := fdEmployee(c.tm, c.mk, 400, 200)
			ref := f2 + (f2-f1)/3
			got, err := Lattice(c.tm, c.mk, LatticeOptions{})
			if err != nil {
				t.Fatal(err)
			}
			e := math.Abs(got.Value - ref)
			if e <= got.ErrorEstimate {
				covered++
			}
			rels = append(rels, e/ref)
			if e > tol*ref {
				t.Errorf("terms %+v market %+v: auto %.6f ± %.2g, FD %.6f, rel %.2g", c.tm, c.mk, got.Value, got.ErrorEstimate, ref, e/ref)
			}
		}
	}
	sort.Float64s(rels)
	n := len(rels)
	t.Logf("%d cases: relative error median %.2g, 95th percentile %.2g, max %.2g; error estimate covers %d (%.1f%%)",
		n, rels[n/2], rels[n*95/100], rels[n-1], covered, 100*float64(covered)/float64(n))
	if float64(covered) < 0.95*float64(n) {
		t.Errorf("error estimate covers %d of %d", covered, n)
	}
	// The barrier near the spot, vesting now to a month away.
	cov := coverage{}
	byRegion := map[string][]float64{}
	for _, c := range barrierCases(*sweepCases, 13) {
		byRegion[c.region] = append(byRegion[c.region], checkBarrierCase(t, c, 200, 100, cov))
	}
	for region, rels := range byRegion {
		sort.Float64s(rels)
		n := len(rels)
		t.Logf("barrier near the spot, %s: %d cases, relative error median %.2g, 95th percentile %.2g, max %.2g", region, n, rels[n/2], rels[n*95/100], rels[n-1])
	}
	cov.check(t, true)
}
