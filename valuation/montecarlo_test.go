package valuation

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// mcZMax is the agreement demanded of a Monte Carlo estimate: within 3 of
// its standard errors of the reference (a two-sided 99.7% band; with a
// fixed seed the test is deterministic, and a failure means a bias, not bad
// luck, once the seed has passed).
const mcZMax = 3

func mcCheck(t *testing.T, name string, terms Terms, mkt Market, o MCOptions, want, wantErr float64) Result {
	t.Helper()
	r, err := MonteCarlo(terms, mkt, o)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	se := math.Hypot(r.ErrorEstimate, wantErr)
	z := (r.Value - want) / se
	if !(math.Abs(z) <= mcZMax) {
		t.Errorf("%s\n  terms %+v market spot %v vol %v q %v options %+v\n  MC %.5f ± %.5f, reference %.5f ± %.5f, z = %.2f, limit %v",
			name, terms, mkt.Spot, mkt.VolAnnual, mkt.DividendYield, o, r.Value, r.ErrorEstimate, want, wantErr, z, mcZMax)
	}
	t.Logf("%s: MC %.5f ± %.5f, reference %.5f, z = %+.2f, term %.3f", name, r.Value, r.ErrorEstimate, want, z, r.ExpectedTermYears)
	return r
}

// Vanilla limits of the employee model (DESIGN §6, limits that must hold):
// with no multiple, no exits and no dividends the option is worth the BSM
// call whatever the vesting (early exercise of a call on a share paying no
// dividends is never optimal, Merton 1973); European terms are the BSM call.
func TestMonteCarloVanillaLimits(t *testing.T) {
	curve, err := NewCurve([]CurvePoint{{Tenor: 1, Rate: 0.03}, {Tenor: 10, Rate: 0.045}})
	if err != nil {
		t.Fatal(err)
	}
	mkt := Market{Spot: 12, VolAnnual: 0.55, Curve: curve}
	o := MCOptions{Paths: 40000, StepsPerYear: 12, Seed: 1}
	terms := Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4}
	bsm, _ := BlackScholes(terms, mkt)
	r := mcCheck(t, "no multiple, no exit, no dividends", terms, mkt, o, bsm.Value, 0)
	if r.ExpectedTermYears != 10 {
		t.Errorf("expected term %v, want 10 (held to expiry)", r.ExpectedTermYears)
	}
	mkt.DividendYield = 0.03
	terms.European = true
	terms.ExerciseMultiple, terms.ExitRate = 2, 0.1 // ignored by European terms
	bsm, _ = BlackScholes(terms, mkt)
	mcCheck(t, "European with dividends", terms, mkt, MCOptions{Paths: 40000, Seed: 2}, bsm.Value, 0)
	// Vesting at expiry is European too.
	terms.European, terms.YearsToVest = false, 10
	mcCheck(t, "vesting at expiry", terms, mkt, MCOptions{Paths: 40000, Seed: 3}, bsm.Value, 0)
}

// With exits only (no multiple) and exercise on exit if in the money, the
// value has a one-dimensional integral form: the exit time τ − V is
// exponential with intensity λ and independent of the share, and exercise
// at s is worth the BSM call of expiry s, so
//
//	value = ∫_V^T λ e^(−λ(s−V)) C(s) ds + e^(−λ(T−V)) C(T).
//
// (Derived here from the model; Simpson's rule with 4000 intervals, whose
// error is far below the Monte Carlo error.)
func TestMonteCarloExitsIntegral(t *testing.T) {
	for i, c := range []struct {
		spot, strike, T, V, r, q, vol, exit float64
	}{
		{50, 50, 10, 3, 0.05, 0.025, 0.35, 0.10},
		{12, 12, 10, 4, 0.04, 0, 0.55, 0.08},
		{30, 40, 7, 1, 0.03, 0.01, 0.45, 0.25},
		{20, 15, 5, 0, 0.02, 0.04, 0.30, 0.50},
	} {
		mkt := Market{Spot: c.spot, VolAnnual: c.vol, DividendYield: c.q, Curve: FlatCurve(c.r)}
		terms := Terms{Strike: c.strike, YearsToExpiry: c.T, YearsToVest: c.V, ExitRate: c.exit}
		lam := -math.Log1p(-c.exit)
		call := func(s float64) float64 {
			if s == 0 {
				return math.Max(c.spot-c.strike, 0)
			}
			return BSMCall(BSMInputs{c.spot, c.strike, s, c.r, c.q, c.vol})
		}
		f := func(s float64) float64 { return lam * math.Exp(-lam*(s-c.V)) * call(s) }
		const n = 4000
		h := (c.T - c.V) / n
		sum := f(c.V) + f(c.T)
		for k := 1; k < n; k++ {
			w := 2.0
			if k%2 == 1 {
				w = 4
			}
			sum += w * f(c.V+float64(k)*h)
		}
		want := sum*h/3 + math.Exp(-lam*(c.T-c.V))*call(c.T)
		// Expected term: V + E[min(τ−V, T−V)] = V + (1 − e^(−λ(T−V)))/λ.
		wantTerm := c.V + (1-math.Exp(-lam*(c.T-c.V)))/lam
		r := mcCheck(t, "exits only", terms, mkt, MCOptions{Paths: 40000, StepsPerYear: 12, Seed: uint64(10 + i)}, want, 0)
		if math.Abs(r.ExpectedTermYears-wantTerm) > 0.03 {
			t.Errorf("exits only %+v: expected term %.4f, want %.4f", c, r.ExpectedTermYears, wantTerm)
		}
	}
}

// upOutCallRebate is an up-and-out call (barrier H above strike K) with a
// rebate R paid when the barrier is hit, under constant r and q: Reiner and
// Rubinstein (1991), as set out in Haug, The Complete Guide to Option
// Pricing Formulas, 2nd ed., standard barrier options, A − B + C − D + F
// with η = −1, φ = 1 (from memory).
func upOutCallRebate(S, K, H, R, T, r, q, sigma float64) float64 {
	b := r - q
	sT := sigma * math.Sqrt(T)
	mu := (b - sigma*sigma/2) / (sigma * sigma)
	lam := math.Sqrt(mu*mu + 2*r/(sigma*sigma))
	x1 := math.Log(S/K)/sT + (1+mu)*sT
	x2 := math.Log(S/H)/sT + (1+mu)*sT
	y1 := math.Log(H*H/(S*K))/sT + (1+mu)*sT
	y2 := math.Log(H/S)/sT + (1+mu)*sT
	zz := math.Log(H/S)/sT + lam*sT
	N := stdNormCDF
	fs, fk := S*math.Exp((b-r)*T), K*math.Exp(-r*T)
	A := fs*N(x1) - fk*N(x1-sT)
	B := fs*N(x2) - fk*N(x2-sT)
	hs := H / S
	C := fs*math.Pow(hs, 2*(mu+1))*N(-y1) - fk*math.Pow(hs, 2*mu)*N(-y1+sT)
	D := fs*math.Pow(hs, 2*(mu+1))*N(-y2) - fk*math.Pow(hs, 2*mu)*N(-y2+sT)
	F := R * (math.Pow(hs, mu+lam)*N(-zz) + math.Pow(hs, mu-lam)*N(-zz+2*lam*sT))
	return A - B + C - D + F
}

// A vested option (V = 0) with an exercise multiple and no exits is an
// up-and-out call with the rebate H − K paid at the hit: the continuously
// monitored barrier of the Monte Carlo against the closed form.
func TestMonteCarloBarrierClosedForm(t *testing.T) {
	for i, c := range []struct {
		spot, strike, T, r, q, vol, mult float64
	}{
		{50, 50, 10, 0.05, 0.025, 0.35, 3},
		{12, 12, 10, 0.04, 0, 0.55, 2.5},
		{40, 50, 5, 0.03, 0.01, 0.30, 1.5},
	} {
		mkt := Market{Spot: c.spot, VolAnnual: c.vol, DividendYield: c.q, Curve: FlatCurve(c.r)}
		terms := Terms{Strike: c.strike, YearsToExpiry: c.T, ExerciseMultiple: c.mult}
		H := c.mult * c.strike
		want := upOutCallRebate(c.spot, c.strike, H, H-c.strike, c.T, c.r, c.q, c.vol)
		mcCheck(t, "vested, multiple only", terms, mkt, MCOptions{Paths: 40000, StepsPerYear: 52, Seed: uint64(20 + i)}, want, 0)
	}
}

// With the barrier monitored by the Brownian bridge, even 4 steps a year
// give the vested multiple-only option's closed forms: the value (rebate
// H − K paid at the hit, Reiner and Rubinstein as above) and the expected
// term E[min(τ, T)] = ∫₀ᵀ P(τ > t) dt, with the first-passage law of
// Brownian motion with drift ν = r − q − σ²/2 to b = ln(H/S0):
// P(τ > t) = Φ((b − νt)/(σ√t)) − e^(2νb/σ²)·Φ((−b − νt)/(σ√t)) (e.g. Harrison,
// Brownian Motion and Stochastic Flow Systems, §1.8; from memory), by
// Simpson's rule; the term within 3 of its standard errors.
func TestMonteCarloBridgeHitTime(t *testing.T) {
	for i, c := range []struct {
		spot, strike, T, r, q, vol, mult float64
	}{
		{12, 12, 10, 0.04, 0, 0.55, 2.5},
		{40, 50, 5, 0.03, 0.01, 0.30, 1.5},
	} {
		mkt := Market{Spot: c.spot, VolAnnual: c.vol, DividendYield: c.q, Curve: FlatCurve(c.r)}
		terms := Terms{Strike: c.strike, YearsToExpiry: c.T, ExerciseMultiple: c.mult}
		H := c.mult * c.strike
		want := upOutCallRebate(c.spot, c.strike, H, H-c.strike, c.T, c.r, c.q, c.vol)
		r := mcCheck(t, "vested, multiple only, 4 steps a year", terms, mkt, MCOptions{Paths: 40000, StepsPerYear: 4, Seed: uint64(40 + i)}, want, 0)
		nu := c.r - c.q - c.vol*c.vol/2
		b := math.Log(H / c.spot)
		survive := func(t float64) float64 {
			if t == 0 {
				return 1
			}
			sT := c.vol * math.Sqrt(t)
			return stdNormCDF((b-nu*t)/sT) - math.Exp(2*nu*b/(c.vol*c.vol))*stdNormCDF((-b-nu*t)/sT)
		}
		const n = 2000
		hs := c.T / n
		sum := survive(0) + survive(c.T)
		for k := 1; k < n; k++ {
			sum += float64(2+2*(k%2)) * survive(float64(k)*hs)
		}
		wantTerm := sum * hs / 3
		if z := (r.ExpectedTermYears - wantTerm) / r.TermError; !(math.Abs(z) <= mcZMax) || !(r.TermError > 0) {
			t.Errorf("%+v: expected term %.4f ± %.4f, first-passage integral %.4f, z = %.2f", c, r.ExpectedTermYears, r.TermError, wantTerm, z)
		}
		t.Logf("expected term %.4f ± %.4f, closed form %.4f", r.ExpectedTermYears, r.TermError, wantTerm)
	}
}

// bridgeHit draws the first time a Brownian bridge reaches the barrier. The
// reference is brute force, sharing nothing with its derivation: the same
// bridge built on 500 sub-steps (each drawn from the bridge's conditional
// normal), each sub-step checked for a crossing with the bridge
// probability and the hit put mid-sub-step (error at most 1/1000 of the
// step); among the paths that cross, the mean and quartiles of the hit
// time must agree within 4 standard errors and 0.01 of the step.
func TestBridgeHitLaw(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, c := range []struct{ a, b, h, v float64 }{
		{0, 0, 0.3, 0.09},     // both ends well below
		{0, 0.35, 0.3, 0.09},  // ends above: certain crossing
		{0.25, 0, 0.3, 0.04},  // starts near the barrier
		{0, 0.29, 0.3, 0.01},  // ends near it
		{-0.2, 0.3, 0.3, 0.2}, // ends on it (Lévy)
	} {
		const sub = 500
		var brute []float64
		for len(brute) < 3000 {
			x, t0 := c.a, 0.0
			for k := 0; k < sub; k++ {
				// bridge from x at t0 to b at 1: the next sub-step point
				dt := 1.0 / sub
				rem := 1 - t0
				mean := x + (c.b-x)*dt/rem
				sd := math.Sqrt(c.v * dt * (rem - dt) / rem)
				xn := mean + sd*rng.NormFloat64()
				if k == sub-1 {
					xn = c.b
				}
				if xn >= c.h || rng.Float64() < math.Exp(-2*(c.h-x)*(c.h-xn)/(c.v*dt)) {
					brute = append(brute, t0+dt/2)
					break
				}
				x, t0 = xn, t0+dt
			}
		}
		got := make([]float64, 40000)
		for i := range got {
			got[i] = bridgeHit(rng, c.a, c.b, c.h, c.v)
		}
		mb, sb := meanSD(brute)
		mg, _ := meanSD(got)
		se := sb / math.Sqrt(float64(len(brute)))
		sort.Float64s(brute)
		sort.Float64s(got)
		if math.Abs(mg-mb) > 4*se {
			t.Errorf("%+v: mean hit %.4f, brute force %.4f ± %.4f", c, mg, mb, se)
		}
		for _, q := range []float64{0.25, 0.5, 0.75} {
			qb, qg := brute[int(q*float64(len(brute)))], got[int(q*float64(len(got)))]
			if math.Abs(qb-qg) > 0.01+4*se {
				t.Errorf("%+v: quantile %v of the hit %.4f, brute force %.4f", c, q, qg, qb)
			}
		}
		t.Logf("%+v: mean hit %.4f, brute force %.4f ± %.4f", c, mg, mb, se)
	}
}

func meanSD(x []float64) (mean, sd float64) {
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	for _, v := range x {
		sd += (v - mean) * (v - mean)
	}
	return mean, math.Sqrt(sd / float64(len(x)-1))
}

func TestMonteCarloReproducible(t *testing.T) {
	terms := Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.1}
	mkt := Market{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)}
	o := MCOptions{Paths: 2000, StepsPerYear: 12, Seed: 42}
	a, _ := MonteCarlo(terms, mkt, o)
	b, _ := MonteCarlo(terms, mkt, o)
	if a != b {
		t.Errorf("same seed, different results: %+v, %+v", a, b)
	}
	o.Seed = 43
	c, _ := MonteCarlo(terms, mkt, o)
	if c.Value == a.Value {
		t.Errorf("seeds 42 and 43 gave the same value %v", a.Value)
	}
	if a.Steps != 2000 || a.Method != MethodMC || !(a.ErrorEstimate > 0) {
		t.Errorf("result %+v: want steps 2000, method mc, a positive error estimate", a)
	}
}

func TestMonteCarloErrors(t *testing.T) {
	mkt := Market{Spot: 50, VolAnnual: 0.35, Curve: FlatCurve(0.05)}
	for _, c := range []struct {
		terms Terms
		o     MCOptions
	}{
		{Terms{Strike: 50, YearsToExpiry: 10, Rational: true}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10, ExerciseMultiple: 1}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10, ExerciseMultiple: 0.5}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10, ExerciseMultiple: -2}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10, ExitRate: 1}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10, ExitRate: -0.1}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 11}, MCOptions{}},
		{Terms{Strike: 50, YearsToExpiry: 10}, MCOptions{Paths: 1}},
		{Terms{Strike: 50, YearsToExpiry: 10}, MCOptions{StepsPerYear: -1}},
	} {
		if _, err := MonteCarlo(c.terms, mkt, c.o); err == nil {
			t.Errorf("MonteCarlo(%+v, %+v) gave no error", c.terms, c.o)
		}
	}
}

func BenchmarkMonteCarlo(b *testing.B) {
	b.ReportAllocs()
	terms := Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.1}
	mkt := Market{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)}
	for b.Loop() {
		r, _ := MonteCarlo(terms, mkt, MCOptions{Paths: 10000, StepsPerYear: 52, Seed: 1})
		benchSink += r.Value
	}
}

// Monte Carlo against the lattice (auto mode, default conventions) on a
// spread of employee options: two independent methods of the same model
// agree within 3 combined standard errors (the lattice's error estimate
// counted as one).
func TestMonteCarloVersusLattice(t *testing.T) {
	curve, err := NewCurve([]CurvePoint{{Tenor: 0.5, Rate: 0.035}, {Tenor: 2, Rate: 0.038}, {Tenor: 10, Rate: 0.045}})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name  string
		terms Terms
		mkt   Market
		spy   int
		paths int
	}{
		{"DESIGN §6 employee option, our conventions", Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.10},
			Market{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)}, 24, 40000},
		{"issue 2 done-when grant", Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08},
			Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0, Curve: FlatCurve(0.04)}, 24, 40000},
		{"out of the money, curve", Terms{Strike: 30, YearsToExpiry: 7, YearsToVest: 1, ExerciseMultiple: 2, ExitRate: 0.15},
			Market{Spot: 20, VolAnnual: 0.45, DividendYield: 0.01, Curve: curve}, 24, 40000},
		{"in the money, vested, high exits", Terms{Strike: 15, YearsToExpiry: 5, ExerciseMultiple: 2.2, ExitRate: 0.40},
			Market{Spot: 20, VolAnnual: 0.30, DividendYield: 0.04, Curve: curve}, 24, 40000},
		{"no multiple, exits, dividends", Terms{Strike: 40, YearsToExpiry: 8, YearsToVest: 2, ExitRate: 0.12},
			Market{Spot: 42, VolAnnual: 0.40, DividendYield: 0.03, Curve: FlatCurve(0.03)}, 24, 40000},
		{"multiple only, low vol", Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 1.6},
			Market{Spot: 100, VolAnnual: 0.20, DividendYield: 0.015, Curve: curve}, 24, 40000},
		{"short term, multiple near spot", Terms{Strike: 10, YearsToExpiry: 2, YearsToVest: 0.5, ExerciseMultiple: 1.3, ExitRate: 0.2},
			Market{Spot: 11, VolAnnual: 0.60, DividendYield: 0, Curve: curve}, 52, 40000},
		{"cliff at 1 year, high vol", Terms{Strike: 5, YearsToExpiry: 10, YearsToVest: 1, ExerciseMultiple: 4, ExitRate: 0.05},
			Market{Spot: 4, VolAnnual: 0.80, DividendYield: 0, Curve: FlatCurve(0.045)}, 24, 40000},
		{"negative rates, vesting 3", Terms{Strike: 20, YearsToExpiry: 6, YearsToVest: 3, ExerciseMultiple: 2, ExitRate: 0.1},
			Market{Spot: 20, VolAnnual: 0.30, DividendYield: 0.0, Curve: FlatCurve(-0.005)}, 24, 40000},
		// issue 11's region: the barrier a node or two from the spot, vested
		// now or vesting a day, a week, a month away
		{"barrier near the spot, vested", Terms{Strike: 100, YearsToExpiry: 10, ExerciseMultiple: 1.05, ExitRate: 0.08},
			Market{Spot: 100, VolAnnual: 0.5, Curve: FlatCurve(0.04)}, 52, 40000},
		{"barrier near the spot, a day", Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 1.0 / 365, ExerciseMultiple: 1.3, ExitRate: 0.2},
			Market{Spot: 127, VolAnnual: 0.4, DividendYield: 0.02, Curve: curve}, 52, 40000},
		{"barrier near the spot, a week", Terms{Strike: 100, YearsToExpiry: 7, YearsToVest: 7.0 / 365, ExerciseMultiple: 1.8, ExitRate: 0.3},
			Market{Spot: 184, VolAnnual: 0.6, Curve: curve}, 52, 40000},
		{"barrier near the spot, a month", Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 1.0 / 12, ExerciseMultiple: 1.02, ExitRate: 0.1},
			Market{Spot: 100, VolAnnual: 0.3, Curve: FlatCurve(0.03)}, 52, 40000},
	}
	for i, c := range cases {
		lat, err := Lattice(c.terms, c.mkt, LatticeOptions{})
		if err != nil {
			t.Fatalf("%s: lattice: %v", c.name, err)
		}
		r := mcCheck(t, c.name, c.terms, c.mkt, MCOptions{Paths: c.paths, StepsPerYear: c.spy, Seed: uint64(100 + i)}, lat.Value, lat.ErrorEstimate)
		// Expected terms: within 3 of the Monte Carlo term's standard error,
		// the lattice's estimate counted as one.
		se := math.Hypot(r.TermError, lat.TermError)
		if d := r.ExpectedTermYears - lat.ExpectedTermYears; !(math.Abs(d) <= mcZMax*se) {
			t.Errorf("%s: expected term MC %.4f ± %.4f, lattice %.4f ± %.4f, z = %.2f", c.name, r.ExpectedTermYears, r.TermError, lat.ExpectedTermYears, lat.TermError, d/se)
		}
		t.Logf("  lattice %.5f ± %.5f, term %.4f ± %.4f (MC term %.4f ± %.4f)", lat.Value, lat.ErrorEstimate, lat.ExpectedTermYears, lat.TermError, r.ExpectedTermYears, r.TermError)
	}
}
