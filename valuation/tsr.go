package valuation

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"time"

	"gonum.org/v1/gonum/mat"
)

// PayoutPoint is one point of a payout curve: at percentile rank
// Percentile (0 to 1: the share of peers the company's TSR beats) the
// award pays Payout (a share of the target units: 1 is 100%).
type PayoutPoint struct{ Percentile, Payout float64 }

// PayoutCurve maps the company's percentile rank to the payout: linear
// between its points (in increasing percentile), nothing below the first,
// the last point's payout above the last (common practice: a threshold
// below which nothing vests and a maximum).
type PayoutCurve []PayoutPoint

// Check returns an error naming the first point out of order or range.
func (c PayoutCurve) Check() error {
	if len(c) == 0 {
		return fmt.Errorf("the payout curve has no points")
	}
	for i, p := range c {
		switch {
		case !(p.Percentile >= 0 && p.Percentile <= 1):
			return fmt.Errorf("payout curve point %d: percentile %v must lie between 0 and 1 (0%% to 100%%)", i+1, p.Percentile)
		case !(p.Payout >= 0) || math.IsInf(p.Payout, 0) || p.Payout > 10:
			return fmt.Errorf("payout curve point %d: payout %v must lie between 0 and 10 (0%% to 1000%% of target)", i+1, p.Payout)
		case i > 0 && !(p.Percentile > c[i-1].Percentile):
			return fmt.Errorf("payout curve point %d: percentile %v must be above the point before (%v)", i+1, p.Percentile, c[i-1].Percentile)
		}
	}
	return nil
}

// At is the payout at percentile rank p.
func (c PayoutCurve) At(p float64) float64 {
	if len(c) == 0 || p < c[0].Percentile {
		return 0
	}
	for i := 1; i < len(c); i++ {
		if p < c[i].Percentile {
			a, b := c[i-1], c[i]
			return a.Payout + (b.Payout-a.Payout)*(p-a.Percentile)/(b.Percentile-a.Percentile)
		}
	}
	return c[len(c)-1].Payout
}

// Max is the largest payout on the curve.
func (c PayoutCurve) Max() float64 {
	m := 0.0
	for _, p := range c {
		m = math.Max(m, p.Payout)
	}
	return m
}

// TSRPeer is one company of the peer group as the simulation needs it.
type TSRPeer struct {
	Vol float64 // annual volatility of its total return
	// ToDate is its total-return growth over the part of the performance
	// period before the measurement date (1 + TSR so far; 1 before the
	// period starts).
	ToDate float64
}

// TSRAward is a relative total shareholder return award: units that vest
// at the end of a performance period in a number of shares set by the
// company's percentile rank among its peers' total shareholder returns
// (dividends reinvested) over the period. The company is valued in the
// Market given beside it (its share price, volatility, dividend yield and
// the curve).
type TSRAward struct {
	// YearsToStart is the time to the start of the performance period
	// (0 when it has started); YearsToEnd the time to its end.
	YearsToStart, YearsToEnd float64
	// ToDate is the company's total-return growth over the part of the
	// period before the measurement date (1 + TSR so far).
	ToDate float64
	Peers  []TSRPeer
	// Corr is the correlation of the total returns' log changes, company
	// first, then the peers in order.
	Corr   [][]float64
	Payout PayoutCurve
	// NegativeCap, when HasCap, caps the payout when the company's own
	// TSR over the period is negative (common practice: 100% of target).
	NegativeCap float64
	HasCap      bool
	// VestYears are the tranches' vest dates: each is delivered at the
	// later of its vest date and the end of the period.
	VestYears []float64
}

// TSRResult is what TSRSim found.
type TSRResult struct {
	// Tranches are each tranche's value per target unit, with its standard
	// error (ErrorEstimate), delivery time (ExpectedTermYears) and paths.
	Tranches []Result
	Paths    int
	// AtEnd is the value per target unit delivered at the end of the
	// period, and AtEndSE its standard error.
	AtEnd, AtEndSE float64
	// MeanPayout is the risk-neutral expected payout (a share of target)
	// and MeanPayoutSE its standard error; ZeroPayout the probability of
	// none and Capped the probability that the negative-TSR cap bit.
	MeanPayout, MeanPayoutSE float64
	ZeroPayout, Capped       float64
	// PayoutBins[i] is the probability of a payout in [i, i+1)·PayoutBin
	// of target (the last bin holds the maximum).
	PayoutBins []float64
	// RankDeciles[i] is the probability of a percentile rank in
	// [i/10, (i+1)/10) (the last holds 1).
	RankDeciles [10]float64
}

// PayoutBin is the width of TSRResult.PayoutBins, as a share of target.
const PayoutBin = 0.05

// check returns an error naming the first input of a that is not usable.
func (a TSRAward) check(m Market) (*mat.Cholesky, error) {
	if err := checkClosedForm(Terms{Strike: 0, YearsToExpiry: math.Max(a.YearsToEnd, 1e-9)}, m); err != nil {
		return nil, inputErr("%v", err)
	}
	n := len(a.Peers) + 1
	switch {
	case !finite(a.YearsToEnd) || a.YearsToEnd <= 0:
		return nil, inputErr("years to the end of the performance period %v must be above 0", a.YearsToEnd)
	case !finite(a.YearsToStart) || a.YearsToStart < 0 || a.YearsToStart >= a.YearsToEnd:
		return nil, inputErr("years to the start of the performance period %v must lie in [0, %v)", a.YearsToStart, a.YearsToEnd)
	case !finite(a.ToDate) || a.ToDate <= 0:
		return nil, inputErr("the company's total-return growth to date %v must be above 0", a.ToDate)
	case len(a.Peers) == 0:
		return nil, inputErr("a relative TSR award needs at least one peer")
	case len(a.Corr) != n:
		return nil, inputErr("the correlation matrix has %d rows for %d companies", len(a.Corr), n)
	case len(a.VestYears) == 0:
		return nil, inputErr("a relative TSR award needs at least one tranche")
	case a.HasCap && !(a.NegativeCap >= 0 && finite(a.NegativeCap)):
		return nil, inputErr("the negative-TSR cap %v must be a share at or above 0", a.NegativeCap)
	}
	if err := a.Payout.Check(); err != nil {
		return nil, inputErr("%v", err)
	}
	for i, p := range a.Peers {
		if !finite(p.Vol) || p.Vol <= 0 || p.Vol > 5 {
			return nil, inputErr("peer %d: volatility %v must lie in (0, 5]", i+1, p.Vol)
		}
		if !finite(p.ToDate) || p.ToDate <= 0 {
			return nil, inputErr("peer %d: total-return growth to date %v must be above 0", i+1, p.ToDate)
		}
	}
	for _, v := range a.VestYears {
		if !finite(v) || v < 0 {
			return nil, inputErr("years to vest %v must be at or above 0", v)
		}
	}
	sym := mat.NewSymDense(n, nil)
	for i := range n {
		if len(a.Corr[i]) != n {
			return nil, inputErr("correlation row %d has %d entries for %d companies", i+1, len(a.Corr[i]), n)
		}
		for j := range n {
			c := a.Corr[i][j]
			switch {
			case !finite(c) || c < -1 || c > 1:
				return nil, inputErr("correlation (%d, %d) %v must lie in [-1, 1]", i+1, j+1, c)
			case i == j && c != 1:
				return nil, inputErr("correlation (%d, %d) %v must be 1", i+1, j+1, c)
			case math.Abs(c-a.Corr[j][i]) > 1e-12:
				return nil, inputErr("correlations (%d, %d) %v and (%d, %d) %v differ", i+1, j+1, c, j+1, i+1, a.Corr[j][i])
			}
			sym.SetSym(i, j, c)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(sym) {
		return nil, inputErr("the correlation matrix of %d companies is not positive definite (two peers move as one, or the returns were not observed together)", n)
	}
	return &ch, nil
}

// TSRSim values a relative TSR award by simulation: the company's and the
// peers' total returns follow correlated geometric Brownian motions under
// the risk-neutral measure (each drifts at the curve's rate, dividends
// reinvested; the company's share price at rate less its dividend yield).
// Only the values at the end of the period matter, so each path draws
// them exactly: one correlated normal vector (the Cholesky factor of
// Corr), with one more normal for the company's growth before the period
// starts when it has not. A company's TSR over the period is its growth to
// date times its simulated growth, less 1; the company's percentile rank
// is the share of peers whose TSR its own exceeds (ties count half); the
// payout is a.Payout at that rank, capped at a.NegativeCap when the
// company's TSR is negative and a.HasCap. A tranche is worth
// E[P(0, E)·payout·S_E]·e^(−q·max(0, V − E)) per target unit, E the end
// of the period and V its vest date (the units earn no dividends).
//
// Paths are antithetic pairs, with the control variate P(0, E)·S_E·e^(qE)
// (mean S0), in blocks on all cores, in rounds until the standard error of
// the value is within o.TargetRelSE of it (simBlocks); the result depends
// on the seed only.
func TSRSim(a TSRAward, m Market, o SimOptions) (*TSRResult, error) {
	ts, err := newTSRPaths(a, m)
	if err != nil {
		return nil, err
	}
	if o, err = o.normalized(); err != nil {
		return nil, err
	}
	E := a.YearsToEnd
	ts.bins = int(math.Floor(a.Payout.Max()/PayoutBin)) + 1
	newAcc := func() *tsrAcc { return &tsrAcc{bins: make([]float64, ts.bins)} }
	run := func(rng *rand.Rand, acc *tsrAcc) { ts.block(rng, acc) }
	merge := func(dst, src *tsrAcc) { dst.merge(src) }
	more := func(acc *tsrAcc, paths int) int {
		mean, se, _, _ := acc.cv.estimate(m.Spot)
		return pathsFor(se, o.TargetRelSE*math.Abs(mean), paths)
	}
	acc, paths := simBlocks(o, newAcc, run, merge, more)
	r := &TSRResult{Paths: paths}
	r.AtEnd, r.AtEndSE, _, _ = acc.cv.estimate(m.Spot)
	np := acc.paths
	r.MeanPayout = acc.pay / np
	r.MeanPayoutSE = math.Sqrt(math.Max(acc.payPair2/acc.cv.n-math.Pow(acc.pay/np, 2), 0) / (acc.cv.n - 1))
	r.ZeroPayout, r.Capped = acc.zero/np, acc.capped/np
	r.PayoutBins = make([]float64, ts.bins)
	for i, x := range acc.bins {
		r.PayoutBins[i] = x / np
	}
	for i, x := range acc.ranks {
		r.RankDeciles[i] = x / np
	}
	for _, v := range a.VestYears {
		f := math.Exp(-m.DividendYield * math.Max(0, v-E))
		r.Tranches = append(r.Tranches, Result{Value: r.AtEnd * f, ErrorEstimate: r.AtEndSE * f,
			ExpectedTermYears: math.Max(v, E), Steps: paths, Method: MethodMC})
	}
	return r, nil
}

// newTSRPaths is the fixed part of the simulation of a in m.
func newTSRPaths(a TSRAward, m Market) (*tsrPaths, error) {
	ch, err := a.check(m)
	if err != nil {
		return nil, err
	}
	var L mat.TriDense
	ch.LTo(&L)
	n := len(a.Peers) + 1
	ts := &tsrPaths{a: a, m: m, n: n, L: make([]float64, n*n)}
	for i := range n {
		for j := 0; j <= i; j++ {
			ts.L[i*n+j] = L.At(i, j)
		}
	}
	E, S := a.YearsToEnd, a.YearsToStart
	ts.pE = m.Curve.Discount(E)
	lp := math.Log(m.Curve.Discount(S)) - math.Log(ts.pE) // ∫f over the period
	ts.mu = make([]float64, n)
	ts.sd = make([]float64, n)
	ts.base = make([]float64, n)
	vols := append([]float64{m.VolAnnual}, make([]float64, n-1)...)
	ts.base[0] = math.Log(a.ToDate)
	for i, p := range a.Peers {
		vols[i+1] = p.Vol
		ts.base[i+1] = math.Log(p.ToDate)
	}
	for i, v := range vols {
		ts.mu[i] = lp - v*v*(E-S)/2
		ts.sd[i] = v * math.Sqrt(E-S)
	}
	if S > 0 {
		ts.preMu = -math.Log(m.Curve.Discount(S)) - m.VolAnnual*m.VolAnnual*S/2
		ts.preSd = m.VolAnnual * math.Sqrt(S)
	}
	return ts, nil
}

// tsrPaths is the fixed part of a TSR simulation.
type tsrPaths struct {
	a            TSRAward
	m            Market
	n            int
	L            []float64 // Cholesky factor, row-major lower triangle
	mu, sd, base []float64 // per company: mean and sd of the log growth over the period, log growth to date
	preMu, preSd float64   // the company's log growth before the period starts
	pE           float64   // P(0, E)
	bins         int
}

// tsrAcc accumulates a block's statistics.
type tsrAcc struct {
	cv                                 cvSums
	paths, pay, payPair2, zero, capped float64
	bins                               []float64
	ranks                              [10]float64
}

func (a *tsrAcc) merge(o *tsrAcc) {
	a.cv.merge(&o.cv)
	a.paths += o.paths
	a.pay += o.pay
	a.payPair2 += o.payPair2
	a.zero += o.zero
	a.capped += o.capped
	for i, x := range o.bins {
		a.bins[i] += x
	}
	for i, x := range o.ranks {
		a.ranks[i] += x
	}
}

func (ts *tsrPaths) block(rng *rand.Rand, acc *tsrAcc) {
	n := ts.n
	z := make([]float64, n)
	w := make([]float64, n)
	tsr := make([]float64, n)
	q, E := ts.m.DividendYield, ts.a.YearsToEnd
	for range SimBlockPaths / 2 {
		for i := range z {
			z[i] = rng.NormFloat64()
		}
		pre := 0.0
		if ts.preSd > 0 {
			pre = rng.NormFloat64()
		}
		var ys, cs, pays [2]float64
		for side := range 2 {
			s := 1.0
			if side == 1 {
				s = -1
			}
			ts.levels(z, s, w, tsr)
			beat := 0.0
			for i := 1; i < n; i++ {
				switch {
				case tsr[0] > tsr[i]:
					beat++
				case tsr[0] == tsr[i]:
					beat += 0.5
				}
			}
			rank := beat / float64(n-1)
			pay := ts.a.Payout.At(rank)
			if ts.a.HasCap && tsr[0] < 0 && pay > ts.a.NegativeCap {
				pay = ts.a.NegativeCap
				acc.capped++
			}
			// The company's share price at the end: S0 times its growth
			// from now (before the start, then over the period from now
			// on), less the dividends paid out.
			lg := tsr[0] - ts.base[0] + s*ts.preSd*pre + ts.preMu
			sE := ts.m.Spot * math.Exp(lg-q*E)
			ys[side] = ts.pE * pay * sE
			cs[side] = ts.pE * sE * math.Exp(q*E)
			pays[side] = pay
			acc.paths++
			acc.pay += pay
			if pay == 0 {
				acc.zero++
			}
			acc.bins[min(int(pay/PayoutBin), len(acc.bins)-1)]++
			acc.ranks[min(int(rank*10), 9)]++
		}
		pm := (pays[0] + pays[1]) / 2
		acc.payPair2 += pm * pm
		acc.cv.add((ys[0]+ys[1])/2, (cs[0]+cs[1])/2, E)
	}
}

// levels writes into tsr each company's log total-return growth over the
// whole period, ln(1 + TSR), for the independent normals z (negated when s
// is −1), using w for the correlated ones.
func (ts *tsrPaths) levels(z []float64, s float64, w, tsr []float64) {
	n := ts.n
	for i := range n {
		var x float64
		for j := 0; j <= i; j++ {
			x += ts.L[i*n+j] * z[j]
		}
		w[i] = s * x
		tsr[i] = ts.base[i] + ts.mu[i] + ts.sd[i]*w[i]
	}
}

// Correlations estimates the correlation matrix of daily log returns of
// several price series over the window of lookbackYears ending at asOf
// (the window as HistoricalVol's: round(lookbackYears·365.25) calendar
// days), on the dates every series has a price: each return runs from one
// common date to the next, so all series are measured over the same
// intervals. It returns the matrix and the number of common returns; fewer
// than minReturns (at least 3) is an error wrapping ErrTooFewObservations.
func Correlations(series [][]PricePoint, asOf time.Time, lookbackYears float64, minReturns int) ([][]float64, int, error) {
	n := len(series)
	if n == 0 {
		return nil, 0, fmt.Errorf("%w: no series", ErrTooFewObservations)
	}
	for i, s := range series {
		if err := CheckPrices(s); err != nil {
			return nil, 0, fmt.Errorf("series %d: %w", i+1, err)
		}
	}
	start := asOf.AddDate(0, 0, -int(math.Round(lookbackYears*365.25)))
	day := func(t time.Time) int64 {
		return time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC).Unix() / 86400
	}
	lo, hi := day(start), day(asOf)
	count := map[int64]int{}
	for _, s := range series {
		for _, p := range s {
			if d := day(p.Date); d >= lo && d <= hi {
				count[d]++
			}
		}
	}
	var common []int64
	for d, c := range count {
		if c == n {
			common = append(common, d)
		}
	}
	slices.Sort(common)
	rets := len(common) - 1
	if rets < max(3, minReturns) {
		return nil, max(rets, 0), fmt.Errorf("%w: %d returns on dates common to all %d series in the window %s to %s, want at least %d",
			ErrTooFewObservations, max(rets, 0), n, start.Format(time.DateOnly), asOf.Format(time.DateOnly), max(3, minReturns))
	}
	idx := make(map[int64]int, len(common))
	for i, d := range common {
		idx[d] = i
	}
	r := make([][]float64, n)
	for i, s := range series {
		px := make([]float64, len(common))
		for _, p := range s {
			if k, ok := idx[day(p.Date)]; ok {
				px[k] = p.Price
			}
		}
		r[i] = LogReturns(px)
	}
	out := make([][]float64, n)
	mean := make([]float64, n)
	for i := range r {
		for _, x := range r[i] {
			mean[i] += x
		}
		mean[i] /= float64(rets)
	}
	for i := range out {
		out[i] = make([]float64, n)
	}
	for i := range n {
		for j := i; j < n; j++ {
			var sij, sii, sjj float64
			for k := range rets {
				a, b := r[i][k]-mean[i], r[j][k]-mean[j]
				sij += a * b
				sii += a * a
				sjj += b * b
			}
			c := 1.0
			if i != j {
				c = 0
				if sii > 0 && sjj > 0 {
					c = sij / math.Sqrt(sii*sjj)
				}
			}
			out[i][j], out[j][i] = c, c
		}
	}
	return out, rets, nil
}
