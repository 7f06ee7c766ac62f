package valuation

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// margrabe is the value of the option to exchange asset 2 for asset 1 at T
// (Margrabe 1978, "The value of an option to exchange one asset for
// another", Journal of Finance 33(1)): S1·e^(−q1T)·N(d1) − S2·e^(−q2T)·N(d2),
// d1 = (ln(S1/S2) + (q2 − q1 + σ²/2)T)/(σ√T), d2 = d1 − σ√T,
// σ² = σ1² + σ2² − 2ρσ1σ2.
func margrabe(s1, s2, T, q1, q2, v1, v2, rho float64) float64 {
	sig := math.Sqrt(v1*v1 + v2*v2 - 2*rho*v1*v2)
	d1 := (math.Log(s1/s2) + (q2-q1+sig*sig/2)*T) / (sig * math.Sqrt(T))
	return s1*math.Exp(-q1*T)*stdNormCDF(d1) - s2*math.Exp(-q2*T)*stdNormCDF(d1-sig*math.Sqrt(T))
}

// The correlated geometric Brownian motions of the TSR simulation, on a
// two-asset award that pays (S1 − S2)⁺ at the end: S1 the company's share
// (dividend yield q1, so the price drifts at r − q1) and S2 a peer's total
// return, against Margrabe's formula, checked itself against QuantLib
// 1.29's KirkSpreadOptionEngine at strike 0 (testdata/quantlib_barrier.json).
// Four standard errors, on a seeded sample.
func TestTSRMargrabe(t *testing.T) {
	_, refs := loadBarrierRefs(t)
	for i, c := range refs {
		want := margrabe(c.S1, c.S2, c.Years, c.Q1, c.Q2, c.Vol1, c.Vol2, c.Correlation)
		if math.Abs(want-c.Value) > 1e-9 {
			t.Fatalf("case %d: Margrabe %.10f, QuantLib %.10f", i, want, c.Value)
		}
		m := Market{Spot: c.S1, VolAnnual: c.Vol1, DividendYield: c.Q1, Curve: FlatCurve(c.Rate)}
		a := TSRAward{YearsToEnd: c.Years, ToDate: 1, Peers: []TSRPeer{{Vol: c.Vol2, ToDate: c.S2}},
			Corr: [][]float64{{1, c.Correlation}, {c.Correlation, 1}}, Payout: PayoutCurve{{1, 1}}, VestYears: []float64{c.Years}}
		ts, err := newTSRPaths(a, m)
		if err != nil {
			t.Fatal(err)
		}
		rng := blockRNG(uint64(i), 0)
		z, w, lv := make([]float64, 2), make([]float64, 2), make([]float64, 2)
		const pairs = 200000
		var sum, sq float64
		for range pairs {
			z[0], z[1] = rng.NormFloat64(), rng.NormFloat64()
			var pm float64
			for _, s := range []float64{1, -1} {
				ts.levels(z, s, w, lv)
				s1 := c.S1 * math.Exp(lv[0]-c.Q1*c.Years) // the company's price: growth less dividends
				s2 := math.Exp(lv[1])                     // the peer's total return from its level S2
				pm += ts.pE * math.Max(s1-s2, 0) / 2
			}
			sum += pm
			sq += pm * pm
		}
		mean := sum / pairs
		se := math.Sqrt((sq/pairs - mean*mean) / (pairs - 1))
		if math.Abs(mean-want) > 4*se {
			t.Errorf("case %d %+v: simulated %.5f ± %.5f, Margrabe %.5f", i, c, mean, se, want)
		}
	}
}

// bivariateCDF is M(a, b; ρ) = P(X ≤ a, Y ≤ b) for standard normals of
// correlation ρ, by Simpson's rule on ∫_{−∞}^a φ(x)·Φ((b − ρx)/√(1 − ρ²)) dx
// (20,000 panels from −12; error far below the tests' tolerances).
func bivariateCDF(a, b, rho float64) float64 {
	lo := -12.0
	if a <= lo {
		return 0
	}
	n := 20000
	h := (a - lo) / float64(n)
	s := math.Sqrt(1 - rho*rho)
	f := func(x float64) float64 { return stdNormPDF(x) * stdNormCDF((b-rho*x)/s) }
	sum := f(lo) + f(a)
	for i := 1; i < n; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		sum += w * f(lo+float64(i)*h)
	}
	return sum * h / 3
}

// A binary outperformance award: one target unit pays one share if the
// company's TSR beats its one peer's and is itself positive (a payout
// curve that pays 100% at the top rank, and a negative-TSR cap of 0), with
// performance to date for both. Its closed form under the bivariate normal
// (derived here by the change to the company's share as numeraire, under
// which ln G_c drifts at r + σ1²/2 and the peer's ln G_p at r − σ2²/2 +
// ρσ1σ2): S0·e^(−qE)·M(a, b; ρ_xy) with X = ln(TSR ratio), Y = ln(1 + TSR_c),
// a = (ln(g_c/g_p) + σ_rel²E/2)/(σ_rel√E), b = (ln g_c + (r + σ1²/2)E)/(σ1√E),
// ρ_xy = (σ1 − ρσ2)/σ_rel; and the probability of paying (the mean payout)
// the same under the risk-neutral measure, with the drifts r − σ²/2.
func TestTSRBinaryOutperformance(t *testing.T) {
	const S0, q, r, E, v1, v2, rho, gc, gp = 20.0, 0.02, 0.035, 2.25, 0.35, 0.45, 0.4, 1.05, 1.10
	m := Market{Spot: S0, VolAnnual: v1, DividendYield: q, Curve: FlatCurve(r)}
	a := TSRAward{YearsToEnd: E, ToDate: gc, Peers: []TSRPeer{{Vol: v2, ToDate: gp}}, Corr: [][]float64{{1, rho}, {rho, 1}},
		Payout: PayoutCurve{{1, 1}}, HasCap: true, NegativeCap: 0, VestYears: []float64{E, E + 1}}
	res, err := TSRSim(a, m, SimOptions{Seed: 3, TargetRelSE: 0.003, MaxPaths: 256 * SimBlockPaths})
	if err != nil {
		t.Fatal(err)
	}
	srel := math.Sqrt(v1*v1 + v2*v2 - 2*rho*v1*v2)
	rxy := (v1 - rho*v2) / srel
	aS := (math.Log(gc/gp) + srel*srel*E/2) / (srel * math.Sqrt(E))
	bS := (math.Log(gc) + (r+v1*v1/2)*E) / (v1 * math.Sqrt(E))
	want := S0 * math.Exp(-q*E) * bivariateCDF(aS, bS, rxy)
	if z := (res.AtEnd - want) / res.AtEndSE; math.Abs(z) > 4 {
		t.Errorf("binary outperformance: simulated %.5f ± %.5f, closed form %.5f (z = %.1f)", res.AtEnd, res.AtEndSE, want, z)
	}
	aQ := (math.Log(gc/gp) + (v2*v2-v1*v1)/2*E) / (srel * math.Sqrt(E))
	bQ := (math.Log(gc) + (r-v1*v1/2)*E) / (v1 * math.Sqrt(E))
	p := bivariateCDF(aQ, bQ, rxy)
	if z := (res.MeanPayout - p) / res.MeanPayoutSE; math.Abs(z) > 4 {
		t.Errorf("probability of paying: simulated %.5f ± %.5f, closed form %.5f", res.MeanPayout, res.MeanPayoutSE, p)
	}
	// The second tranche vests a year after the period ends: the same
	// shares, a year's dividends less.
	if got, want := res.Tranches[1].Value, res.Tranches[0].Value*math.Exp(-q); math.Abs(got-want) > 1e-12 {
		t.Errorf("tranche vesting a year after the end: %v, want %v", got, want)
	}
	// Check the bivariate normal itself at an identity: M(0, 0; ρ) =
	// 1/4 + arcsin(ρ)/(2π) (Sheppard's formula).
	if got, want := bivariateCDF(0, 0, 0.3), 0.25+math.Asin(0.3)/(2*math.Pi); math.Abs(got-want) > 1e-9 {
		t.Errorf("M(0, 0; 0.3) = %.12f, want %.12f", got, want)
	}
}

// A large peer group with zero correlation and equal volatilities (the
// company's too), all starting level: the company's total return is
// exchangeable with its peers', so its rank among n peers is uniform on
// {0, 1/n, …, 1} and the expected payout is the average of the payout
// curve over those ranks (a fact of symmetry; common practice as a check
// of TSR models).
func TestTSRUniformRank(t *testing.T) {
	const n = 40
	peers := make([]TSRPeer, n)
	corr := make([][]float64, n+1)
	for i := range corr {
		corr[i] = make([]float64, n+1)
		corr[i][i] = 1
	}
	for i := range peers {
		peers[i] = TSRPeer{Vol: 0.4, ToDate: 1}
	}
	curve := PayoutCurve{{0.25, 0.5}, {0.5, 1}, {0.9, 2}}
	a := TSRAward{YearsToEnd: 3, ToDate: 1, Peers: peers, Corr: corr, Payout: curve, VestYears: []float64{3}}
	m := Market{Spot: 50, VolAnnual: 0.4, DividendYield: 0, Curve: FlatCurve(0.03)}
	res, err := TSRSim(a, m, SimOptions{Seed: 11, MinPaths: 32 * SimBlockPaths, MaxPaths: 32 * SimBlockPaths})
	if err != nil {
		t.Fatal(err)
	}
	var want float64
	for k := 0; k <= n; k++ {
		want += curve.At(float64(k)/n) / (n + 1)
	}
	if z := (res.MeanPayout - want) / res.MeanPayoutSE; math.Abs(z) > 4 {
		t.Errorf("mean payout %.5f ± %.5f, the curve's average over uniform ranks %.5f", res.MeanPayout, res.MeanPayoutSE, want)
	}
	for d, p := range res.RankDeciles {
		// ranks k/40 in [d/10, (d+1)/10): 4 of the 41, 5 in the last decile
		w := 4.0 / 41
		if d == 9 {
			w = 5.0 / 41
		}
		if se := math.Sqrt(w * (1 - w) / float64(res.Paths)); math.Abs(p-w) > 5*se {
			t.Errorf("rank decile %d: %.4f, want %.4f ± %.4f", d, p, w, se)
		}
	}
}

func TestPayoutCurve(t *testing.T) {
	c := PayoutCurve{{0.25, 0.5}, {0.5, 1}, {0.9, 2}}
	for _, x := range []struct{ p, want float64 }{
		{0, 0}, {0.2499, 0}, {0.25, 0.5}, {0.375, 0.75}, {0.5, 1}, {0.7, 1.5}, {0.9, 2}, {1, 2},
	} {
		if got := c.At(x.p); math.Abs(got-x.want) > 1e-12 {
			t.Errorf("At(%v) = %v, want %v", x.p, got, x.want)
		}
	}
	for _, bad := range []PayoutCurve{nil, {{0.5, 1}, {0.5, 2}}, {{1.2, 1}}, {{0.5, -1}}} {
		if bad.Check() == nil {
			t.Errorf("%v: want an error", bad)
		}
	}
}

// The correlation estimator against the sample correlation worked out
// directly on two series built from known returns, on their common dates
// (a date one series lacks drops out, and the return spans the gap).
func TestCorrelations(t *testing.T) {
	day := func(i int) time.Time { return time.Date(2025, 1, 1, 0, 0, 0, 0, time.UTC).AddDate(0, 0, i) }
	rng := rand.New(rand.NewPCG(1, 2))
	var a, b []PricePoint
	pa, pb := 10.0, 20.0
	const rho = 0.6
	for i := range 400 {
		z1, z2 := rng.NormFloat64(), rng.NormFloat64()
		pa *= math.Exp(0.02 * z1)
		pb *= math.Exp(0.03 * (rho*z1 + math.Sqrt(1-rho*rho)*z2))
		a = append(a, PricePoint{day(i), pa})
		if i%50 != 7 {
			b = append(b, PricePoint{day(i), pb})
		}
	}
	c, n, err := Correlations([][]PricePoint{a, b}, day(399), 2, 20)
	if err != nil {
		t.Fatal(err)
	}
	// Direct: returns between the dates both have.
	var ra, rb []float64
	has := map[time.Time]float64{}
	for _, p := range b {
		has[p.Date] = p.Price
	}
	var lastA, lastB float64
	first := true
	for _, p := range a {
		q, ok := has[p.Date]
		if !ok {
			continue
		}
		if !first {
			ra = append(ra, math.Log(p.Price/lastA))
			rb = append(rb, math.Log(q/lastB))
		}
		lastA, lastB, first = p.Price, q, false
	}
	var ma, mb float64
	for i := range ra {
		ma += ra[i] / float64(len(ra))
		mb += rb[i] / float64(len(rb))
	}
	var sab, saa, sbb float64
	for i := range ra {
		sab += (ra[i] - ma) * (rb[i] - mb)
		saa += (ra[i] - ma) * (ra[i] - ma)
		sbb += (rb[i] - mb) * (rb[i] - mb)
	}
	want := sab / math.Sqrt(saa*sbb)
	if n != len(ra) || math.Abs(c[0][1]-want) > 1e-12 || c[1][0] != c[0][1] || c[0][0] != 1 {
		t.Errorf("correlation %v over %d returns, want %v over %d", c, n, want, len(ra))
	}
	if math.Abs(c[0][1]-rho) > 0.15 {
		t.Errorf("correlation %v far from the %v the returns were drawn with", c[0][1], rho)
	}
	if _, _, err := Correlations([][]PricePoint{a, b}, day(399), 0.01, 20); !errors.Is(err, ErrTooFewObservations) {
		t.Errorf("a window of 4 days: %v, want ErrTooFewObservations", err)
	}
}

// The simulation gives the same numbers on one core and on several, and a
// correlation matrix that is not positive definite is refused.
func TestTSRSimReproducible(t *testing.T) {
	a := TSRAward{YearsToStart: 0.5, YearsToEnd: 3, ToDate: 1, Peers: []TSRPeer{{0.3, 1}, {0.5, 1}, {0.4, 1}},
		Corr:   [][]float64{{1, 0.5, 0.3, 0.2}, {0.5, 1, 0.4, 0.1}, {0.3, 0.4, 1, 0.3}, {0.2, 0.1, 0.3, 1}},
		Payout: PayoutCurve{{0.3, 0.5}, {0.5, 1}, {1, 2}}, HasCap: true, NegativeCap: 1, VestYears: []float64{3}}
	m := Market{Spot: 30, VolAnnual: 0.45, DividendYield: 0.01, Curve: FlatCurve(0.04)}
	o := SimOptions{Seed: 4, MinPaths: 6 * SimBlockPaths, MaxPaths: 6 * SimBlockPaths, Workers: 1}
	one, err := TSRSim(a, m, o)
	if err != nil {
		t.Fatal(err)
	}
	o.Workers = 4
	four, err := TSRSim(a, m, o)
	if err != nil {
		t.Fatal(err)
	}
	if one.Tranches[0] != four.Tranches[0] || one.MeanPayout != four.MeanPayout {
		t.Errorf("one worker %+v (payout %v), four %+v (payout %v)", one.Tranches[0], one.MeanPayout, four.Tranches[0], four.MeanPayout)
	}
	a.Corr[1][2], a.Corr[2][1] = -0.99, -0.99
	a.Corr[1][3], a.Corr[3][1] = 0.99, 0.99
	a.Corr[2][3], a.Corr[3][2] = 0.99, 0.99
	if _, err := TSRSim(a, m, o); !errors.Is(err, ErrLatticeInput) {
		t.Errorf("an impossible correlation matrix: %v, want an input error", err)
	}
}
